"""Loaded once by the fork server that starts the worker processes of parallel MCMC chains.

Every chain worker is forked from the fork server (`assess.updating.workers`). Without
this module each worker imported PyMC and PyTensor again, scanned PyTensor's compile
cache and probed the C compiler's flags before its first draw: about 4 s per worker,
paid one worker after another by the process that starts them (24 workers in a cold demo
main job: about 100 s, measured with cProfile on `assess run --quick`). Done here once,
the forked workers inherit it all.
"""

from __future__ import annotations

import pymc  # noqa: F401  (the import itself is the point)


def _warm_compile_cache() -> None:
    """Scan the compile cache and probe the compiler flags now rather than in each worker."""
    try:
        from pytensor.link.c.basic import get_module_cache
        from pytensor.link.c.cmodule import GCC_compiler

        get_module_cache()
        GCC_compiler.compile_args()
    except Exception:  # noqa: BLE001  (a worker then does it itself, as before)
        pass


_warm_compile_cache()
