"""Worker processes of parallel chains die with the process that started them (a kill -9 of a
run used to leave PyMC workers asleep for ever). Reference: POSIX kill(2) with signal 0 as the test of a process being alive.

A parent starts a sleeping child through `assess.updating.workers.dying_context` (what
`sample_posterior` hands to PyMC) and is killed; the child must go. The same with the plain
multiprocessing context is the control: that child survives, so the check can fail.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import textwrap
import time

import pytest

SCRIPT = textwrap.dedent("""
    import multiprocessing, sys, time
    from assess.updating.workers import dying_context

    if __name__ == "__main__":
        context = dying_context() if sys.argv[1] == "dying" else multiprocessing.get_context(
            "forkserver")
        child = context.Process(target=time.sleep, args=(120,), daemon=True)
        child.start()
        print(child.pid, flush=True)
        time.sleep(120)
""")


def running(pid: int) -> bool:
    state = subprocess.run(["ps", "-o", "stat=", "-p", str(pid)], capture_output=True,
                           text=True).stdout.strip()
    return bool(state) and not state.startswith("Z")


def child_after_killing_its_parent(kind: str, tmp_path) -> bool:
    script = tmp_path / "parent.py"
    script.write_text(SCRIPT)
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)}
    parent = subprocess.Popen([sys.executable, str(script), kind], stdout=subprocess.PIPE,
                              env=env, text=True)
    child = int(parent.stdout.readline())
    try:
        assert running(child)
        parent.send_signal(signal.SIGKILL)
        parent.wait(timeout=30)
        deadline = time.time() + 20
        while time.time() < deadline and running(child):
            time.sleep(0.2)
        return running(child)
    finally:
        if running(child):
            os.kill(child, signal.SIGKILL)


@pytest.mark.skipif(sys.platform == "win32", reason="POSIX processes")
def test_a_worker_dies_with_its_killed_parent(tmp_path):
    assert child_after_killing_its_parent("plain", tmp_path), "control: a plain child survives"
    assert not child_after_killing_its_parent("dying", tmp_path)


@pytest.mark.parametrize("lost", ["compile lock", "worker"])
def test_a_sampler_run_lost_to_its_surroundings_is_an_analysis_error(monkeypatch, lost):
    # common practice: a run that failed for a reason outside the model (another process
    # held PyTensor's compile lock; a chain's worker died) is reported as a failed analysis
    # with what to try, not as a traceback; any other exception passes unchanged
    import pymc as pm
    from filelock import Timeout
    from pymc.sampling.parallel import ParallelSamplingError

    from assess.errors import AnalysisError
    from assess.updating import models

    def failing(*args, **kwargs):
        if lost == "compile lock":
            raise Timeout("/cache/.lock")
        raise ParallelSamplingError("Chain 1 failed.", 1)

    monkeypatch.setattr(models, "_sample", failing)
    with pm.Model() as model:
        pm.Normal("x")
    with pytest.raises(AnalysisError, match=models.CORES_VARIABLE) as caught:
        models.sample_posterior(model, draws=10, tune=10, chains=1, seed=1)
    assert caught.value.fix and models.CORES_VARIABLE in caught.value.fix

    monkeypatch.setattr(models, "_sample", lambda *a, **k: 1 / 0)
    with pytest.raises(ZeroDivisionError):
        models.sample_posterior(model, draws=10, tune=10, chains=1, seed=1)


PRELOAD_SCRIPT = textwrap.dedent("""
    import sys
    from assess.updating.workers import dying_context

    def report(queue):
        queue.put("pymc" in sys.modules)

    if __name__ == "__main__":
        context = dying_context()
        queue = context.Queue()
        child = context.Process(target=report, args=(queue,))
        child.start()
        print(queue.get(timeout=120), "pymc" in sys.modules, flush=True)
        child.join()
""")


@pytest.mark.skipif(sys.platform == "win32", reason="POSIX fork server")
def test_a_chain_worker_starts_with_pymc_already_loaded(tmp_path):
    # common practice (multiprocessing's fork server, Python docs): modules preloaded by the
    # server are inherited by every worker it forks, so no worker imports PyMC itself; the
    # parent never imported it, so the module can only come from the preload
    script = tmp_path / "parent.py"
    script.write_text(PRELOAD_SCRIPT)
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)}
    done = subprocess.run([sys.executable, str(script)], capture_output=True, text=True,
                          env=env, timeout=300)
    assert done.returncode == 0, done.stderr
    assert done.stdout.split() == ["True", "False"]
