"""Stored posteriors: content-addressed netCDF files in the site folder.

Every MCMC result is written once to ``results/posteriors/<kind>-<hash12>.nc``,
where the hash covers everything that made it; a later run with the same
inputs reads the file instead of sampling again.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

POSTERIOR_FOLDER = Path("results") / "posteriors"


def posterior_path(site_folder: Path, kind: str, digest: str) -> Path:
    """Where the posterior of ``kind`` with input hash ``digest`` is stored."""
    return Path(site_folder) / POSTERIOR_FOLDER / f"{kind}-{digest[:12]}.nc"


def read_posterior(path: Path):
    """The stored InferenceData at ``path``."""
    import arviz as az

    return az.from_netcdf(path, engine="h5netcdf")


def write_posterior(idata, path: Path) -> None:
    """Write ``idata`` to ``path`` atomically (temporary file, then rename)."""
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.stem}-", suffix=".nc", dir=path.parent)
    os.close(fd)
    try:
        idata.to_netcdf(tmp, engine="h5netcdf")
        os.replace(tmp, path)
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)
