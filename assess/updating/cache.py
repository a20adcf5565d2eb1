"""One cache for every MCMC fit: content hash, read or sample, gate, atomic write.

Every posterior the tool samples (materials, chloride, carbonation, corrosion)
goes through `cached_posterior`. The file name is a SHA-256 hash of everything
that made the fit (its kind, data, priors, sampler settings and the code
version), so a run with the same inputs reads the stored InferenceData instead
of sampling again. A stored file passes the same convergence gate as a fresh
run before anything is reported from it (design decision 5). A file that
cannot be read (interrupted copy, disk full, zero bytes) is set aside under a
``.damaged-`` name, never deleted, and the fit is sampled again with a warning.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import hashlib
import json
import os
import warnings
from pathlib import Path
from typing import Any, Callable

import numpy as np

POSTERIOR_FOLDER = Path("results") / "posteriors"
"""Folder of the stored posteriors, relative to the site folder."""


def plain(value: Any) -> Any:
    """JSON-ready form of a hash payload: dataclasses by field, arrays rounded to 1e-9."""
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {f.name: plain(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, dict):
        return {str(k): plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [plain(v) for v in value]
    if isinstance(value, np.ndarray):
        return np.round(value, 9).tolist() if value.dtype.kind == "f" else value.tolist()
    if hasattr(value, "to_numpy") and hasattr(value, "shape"):
        # pandas Series/DataFrame: every value (str() would abbreviate long ones)
        columns = getattr(value, "columns", None)
        if columns is not None:
            return {str(c): plain(value[c].to_numpy()) for c in columns}
        return plain(value.to_numpy())
    if isinstance(value, (set, frozenset)):
        return sorted(plain(v) for v in value)
    if isinstance(value, (np.floating, float)):
        return round(float(value), 9)
    if isinstance(value, np.integer):
        return int(value)
    return value


def content_hash(kind: str, payload: dict) -> str:
    """SHA-256 of a fit's kind, inputs and the code version (hex digest)."""
    import assess

    text = json.dumps(
        {"code_version": assess.__version__, "kind": kind, "inputs": plain(payload)},
        sort_keys=True,
        default=str,
    )
    return hashlib.sha256(text.encode()).hexdigest()


def posterior_path(site_folder: Path, kind: str, digest: str) -> Path:
    """Where the posterior of ``kind`` with input hash ``digest`` is stored.

    The folder is made through `inspection_io.paths.site_subfolder`, which refuses a
    link that leads it outside the site folder.
    """
    from inspection_io.paths import site_subfolder

    return site_subfolder(site_folder, *POSTERIOR_FOLDER.parts) / f"{kind}-{digest[:12]}.nc"


def read_posterior(path: Path):
    """The stored InferenceData at ``path`` (loaded into memory, file closed)."""
    import arviz as az

    idata = az.from_netcdf(path, engine="h5netcdf")
    for group in idata.groups():  # read every array now, so a damaged file fails here
        getattr(idata, group).load()
    return idata


def write_posterior(idata, path: Path) -> None:
    """Write ``idata`` to ``path`` atomically (temporary file, then rename)."""
    from inspection_io.paths import replace_atomically

    replace_atomically(path, lambda tmp: idata.to_netcdf(tmp, engine="h5netcdf"), suffix=".nc.tmp")


def set_aside(path: Path) -> Path:
    """Rename a damaged file to ``<name>.damaged-<timestamp>`` (never deleted); the new path."""
    stamp = dt.datetime.now().strftime("%Y%m%dT%H%M%S%f")
    target = path.with_name(f"{path.name}.damaged-{stamp}")
    os.replace(path, target)
    return target


def clean_stale_temporaries(site_folder: Path, *, older_than: float = 0.0) -> list[Path]:
    """Remove temporary posterior files left by a run that was killed while writing.

    Call it while holding the site lock (`inspection_io.locking.site_lock`), so that
    no running fit's file is taken for a stale one.
    """
    from inspection_io.paths import remove_stale_temporaries

    return remove_stale_temporaries(
        Path(site_folder) / POSTERIOR_FOLDER, ".*.nc.tmp", older_than=older_than
    )


@dataclasses.dataclass(frozen=True)
class CachedFit:
    """A fit and where it came from.

    Attributes
    ----------
    fit : object
        What ``rebuild`` (stored) or ``sample`` (fresh) returned.
    path : Path or None
        Stored InferenceData (None when not stored).
    digest : str
        Content hash of the inputs.
    reused : bool
        True when read from the stored file.
    """

    fit: Any
    path: Path | None
    digest: str
    reused: bool


def cached_posterior(
    site_folder: Path | None,
    kind: str,
    payload: dict,
    *,
    sample: Callable[[], Any],
    rebuild: Callable[[Any, Any], Any],
    parameter_names,
    what: str,
    fit: str | None = None,
) -> CachedFit:
    """Read the stored fit of these inputs, or sample it; gated either way.

    Parameters
    ----------
    site_folder : Path or None
        Site folder holding ``results/posteriors``; None: never stored, always sampled.
    kind : str
        Kind of fit (file-name prefix): ``"materials"``, ``"chloride"``, ...
    payload : dict
        Everything that decides the fit (data, priors, sampler settings).
    sample : callable
        Runs the fit; returns an object with ``idata`` (it applies the gate itself).
    rebuild : callable
        ``rebuild(idata, gate)`` -> the fit object from a stored InferenceData.
    parameter_names : sequence of str
        Free parameters the gate checks.
    what : str
        Plain words for messages ("chloride-ingress parameters").
    fit : str, optional
        Kind of fit in the run settings (`assess.site.settings.FIT_KINDS`), named in
        the gate message so that the user knows which settings to change.

    Raises
    ------
    ConvergenceError
        A fresh or stored run fails the gate (a failing fresh run is not stored).
    """
    from assess.updating.gate import require_convergence

    digest = content_hash(kind, payload)
    if site_folder is None:
        return CachedFit(_sample_naming_the_fit(sample, fit), None, digest, False)
    path = posterior_path(site_folder, kind, digest)
    if path.exists():
        try:
            idata = read_posterior(path)
            names = [n for n in parameter_names if n in idata.posterior]
        except Exception as exc:  # any unreadable file: set aside and sample again
            moved = set_aside(path)
            warnings.warn(
                f"the stored posterior {path.name} could not be read ({type(exc).__name__}); "
                f"it was set aside as {moved.name} and the {what} were sampled again",
                UserWarning,
                stacklevel=2,
            )
        else:
            gate = require_convergence(idata, names, what=what, fit=fit)
            return CachedFit(rebuild(idata, gate), path, digest, True)
    result = _sample_naming_the_fit(sample, fit)
    write_posterior(result.idata, path)
    return CachedFit(result, path, digest, False)


def _sample_naming_the_fit(sample: Callable[[], Any], fit: str | None) -> Any:
    """Run ``sample``; a gate failure that does not yet say which settings to change does so."""
    from assess.errors import ConvergenceError
    from assess.updating.gate import how_to_fix

    try:
        return sample()
    except ConvergenceError as exc:
        if exc.fit is not None or fit is None:
            raise
        fix = how_to_fix(fit)
        raise ConvergenceError(f"{exc}\n{fix}", fix=fix, fit=fit) from None


__all__ = [
    "CachedFit",
    "POSTERIOR_FOLDER",
    "cached_posterior",
    "clean_stale_temporaries",
    "content_hash",
    "plain",
    "posterior_path",
    "read_posterior",
    "set_aside",
    "write_posterior",
]
