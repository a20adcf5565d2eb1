"""The site lock between processes (flock(2): exclusive, released when the holder exits)."""

import os
import signal
import subprocess
import sys
import textwrap
import time

import pytest

from inspection_io.errors import InputError
from inspection_io.locking import LOCK_NAME, SiteBusyError, site_lock

pytestmark = pytest.mark.skipif(sys.platform == "win32", reason="flock is POSIX")

HOLDER = textwrap.dedent("""
    import sys, time
    from inspection_io.locking import site_lock
    hold = float(sys.argv[2])
    with site_lock(sys.argv[1], wait_seconds=float(sys.argv[3])):
        print("locked", flush=True)
        if hold < 0:
            sys.stdin.readline()      # hold until the test says so (or kills us)
        else:
            time.sleep(hold)
    print("released", flush=True)
""")


def start_holder(site, hold=-1.0, wait=0.0):
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)}
    process = subprocess.Popen([sys.executable, "-c", HOLDER, str(site), str(hold), str(wait)],
                               stdin=subprocess.PIPE, stdout=subprocess.PIPE, text=True, env=env)
    assert process.stdout.readline().strip() == "locked"
    return process


def test_second_process_is_refused_with_the_holder_named(tmp_path):
    holder = start_holder(tmp_path)
    try:
        started = time.monotonic()
        with pytest.raises(SiteBusyError) as info, site_lock(tmp_path, wait_seconds=0.3):
            pass
        waited = time.monotonic() - started
        assert isinstance(info.value, InputError)
        assert f"process {holder.pid}" in str(info.value) and "waited 0.3 s" in str(info.value)
        assert waited >= 0.3          # it did wait (bounded) before refusing
    finally:
        holder.stdin.write("\n")
        holder.stdin.close()
        assert holder.wait(timeout=30) == 0
    with site_lock(tmp_path, wait_seconds=0):  # released: free at once
        pass


def test_second_process_waits_until_the_first_finishes(tmp_path):
    holder = start_holder(tmp_path, hold=0.5)
    started = time.monotonic()
    with site_lock(tmp_path, wait_seconds=20):
        waited = time.monotonic() - started
        assert holder.poll() is not None or holder.stdout.readline().strip() == "released"
    holder.wait(timeout=30)
    assert 0.0 < waited < 20


def test_a_killed_holder_leaves_the_site_free(tmp_path):
    holder = start_holder(tmp_path)
    os.kill(holder.pid, signal.SIGKILL)
    holder.wait(timeout=30)
    with site_lock(tmp_path, wait_seconds=0):   # the kernel released the flock
        assert (tmp_path / LOCK_NAME).is_file()


def test_two_processes_never_hold_the_lock_together(tmp_path):
    # both children append "in"/"out" around their critical section; lines must pair up
    log = tmp_path / "log"
    script = textwrap.dedent(f"""
        import sys, time
        from inspection_io.locking import site_lock
        for _ in range(5):
            with site_lock({str(tmp_path)!r}, wait_seconds=30):
                with open({str(log)!r}, "a") as f:
                    f.write("in\\n"); f.flush(); time.sleep(0.02); f.write("out\\n")
    """)
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)}
    children = [subprocess.Popen([sys.executable, "-c", script], env=env) for _ in range(2)]
    assert [c.wait(timeout=60) for c in children] == [0, 0]
    lines = log.read_text().split()
    assert lines == ["in", "out"] * 10


def test_the_lock_is_reentrant_in_one_process(tmp_path):
    with site_lock(tmp_path, wait_seconds=0):
        with site_lock(tmp_path, wait_seconds=0):
            pass
        with site_lock(tmp_path, wait_seconds=0):
            pass


def test_lock_file_link_and_missing_folder_are_refused(tmp_path):
    with pytest.raises(InputError, match="not found"), site_lock(tmp_path / "nowhere"):
        pass
    outside = tmp_path / "outside"
    outside.write_text("keep me\n")
    site = tmp_path / "site"
    site.mkdir()
    (site / LOCK_NAME).symlink_to(outside)
    with pytest.raises(InputError, match="outside the site folder"), site_lock(site):
        pass
    assert outside.read_text() == "keep me\n"
