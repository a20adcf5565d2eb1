"""A portfolio: a folder of site folders, or a ``portfolio.toml`` that lists them.

``portfolio.toml`` (every key optional)::

    name = "Northern estate car parks"
    sites = ["alder-row", "../elsewhere/quarry-street"]   # relative to this file
    [run]                      # main-job settings for every site
    seed = 20261202
    quick = false
    draws = 1000
    history = true
    [cluster]
    scheduler = "tcp://10.1.2.3:8786"   # an existing Dask cluster; default: a local one
    workers = 2                         # local cluster size; default: the machine's cores

Without ``sites`` (or without a portfolio file) the portfolio is every direct
sub-folder of the portfolio folder that holds a ``site.toml``. A site is known
by its folder name, which must be unique in the portfolio. The portfolio's own
results (record, summary pages) go to ``<portfolio folder>/results/``.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

try:
    import tomllib
except ModuleNotFoundError:  # Python 3.10
    import tomli as tomllib

from assess.errors import InputError
from assess.portfolio.site_job import SETTING_KEYS

FILE_NAME = "portfolio.toml"
_TOP_KEYS = ("name", "sites", "run", "cluster")
_CLUSTER_KEYS = ("scheduler", "workers")
_SETTING_TYPES = {"seed": int, "quick": bool, "draws": int, "history": bool, "life": bool,
                  "worth": bool, "horizon_years": int}


@dataclasses.dataclass(frozen=True)
class SiteEntry:
    """One site of a portfolio: its key (folder name) and folder."""

    key: str
    folder: Path


@dataclasses.dataclass(frozen=True)
class Portfolio:
    """The sites of a portfolio, its run settings and where to run them.

    Attributes
    ----------
    folder : Path
        The portfolio folder (results go to ``folder / "results"``).
    name : str
    sites : tuple of SiteEntry
    settings : dict
        Main-job settings from ``[run]`` (keys of `site_job.SETTING_KEYS`).
    scheduler : str or None
        Address of an existing Dask scheduler, or None for a local cluster.
    workers : int or None
        Number of local workers (None: one per core).
    """

    folder: Path
    name: str
    sites: tuple
    settings: dict
    scheduler: str | None = None
    workers: int | None = None


def load_portfolio(path: str | Path) -> Portfolio:
    """Read a portfolio from a ``portfolio.toml`` or from a folder (with or without one)."""
    path = Path(path)
    if path.is_dir():
        file = path / FILE_NAME
        folder = path
    elif path.is_file():
        file, folder = path, path.parent
    else:
        raise InputError("no such portfolio file or folder", file=path)
    data = _read(file) if file.is_file() else {}
    unknown = sorted(set(data) - set(_TOP_KEYS))
    if unknown:
        raise InputError(f"unknown key(s) {', '.join(unknown)}; known: {', '.join(_TOP_KEYS)}",
                         file=file, column=unknown[0])
    name = data.get("name", folder.resolve().name)
    if not isinstance(name, str):
        raise InputError("expected a text", file=file, column="name")
    settings = _settings(data.get("run", {}), file)
    scheduler, workers = _cluster(data.get("cluster", {}), file)
    if "sites" in data:
        sites = _listed_sites(data["sites"], folder, file)
    else:
        sites = _found_sites(folder)
    if not sites:
        raise InputError("the portfolio has no site: list site folders under 'sites' in "
                         f"{FILE_NAME} or put site folders (each with a site.toml) in it",
                         file=file if file.is_file() else folder)
    return Portfolio(folder, name, tuple(sites), settings, scheduler, workers)


def _read(file: Path) -> dict:
    try:
        return tomllib.loads(file.read_text(encoding="utf-8"))
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"malformed TOML: {exc}", file=file) from None
    except UnicodeDecodeError as exc:
        raise InputError(f"the file is not UTF-8 text (byte {exc.start})", file=file) from None


def _settings(table, file: Path) -> dict:
    if not isinstance(table, dict):
        raise InputError("expected a table [run]", file=file, column="run")
    out = {}
    for key, value in table.items():
        if key not in SETTING_KEYS:
            raise InputError(f"unknown run setting; known: {', '.join(SETTING_KEYS)}",
                             file=file, column=f"run.{key}")
        kind = _SETTING_TYPES[key]
        if kind is int and (isinstance(value, bool) or not isinstance(value, int)):
            raise InputError("expected a whole number", file=file, column=f"run.{key}")
        if kind is bool and not isinstance(value, bool):
            raise InputError("expected true or false", file=file, column=f"run.{key}")
        if key in ("draws", "horizon_years") and value < 1:
            raise InputError("expected a number >= 1", file=file, column=f"run.{key}")
        out[key] = value
    return out


def _cluster(table, file: Path) -> tuple[str | None, int | None]:
    if not isinstance(table, dict):
        raise InputError("expected a table [cluster]", file=file, column="cluster")
    for key in table:
        if key not in _CLUSTER_KEYS:
            raise InputError(f"unknown key; known: {', '.join(_CLUSTER_KEYS)}", file=file,
                             column=f"cluster.{key}")
    scheduler = table.get("scheduler")
    if scheduler is not None and (not isinstance(scheduler, str) or not scheduler.strip()):
        raise InputError("expected the scheduler address as text, e.g. \"tcp://10.1.2.3:8786\"",
                         file=file, column="cluster.scheduler")
    workers = table.get("workers")
    if workers is not None and (isinstance(workers, bool) or not isinstance(workers, int)
                                or workers < 1):
        raise InputError("expected a whole number >= 1", file=file, column="cluster.workers")
    return scheduler, workers


def _listed_sites(listed, folder: Path, file: Path) -> list[SiteEntry]:
    if not isinstance(listed, list) or not all(isinstance(s, str) for s in listed):
        raise InputError("expected a list of site folders (text)", file=file, column="sites")
    entries, seen = [], {}
    for i, text in enumerate(listed):
        site_folder = (folder / text).resolve()
        if not (site_folder / "site.toml").is_file():
            raise InputError(f"'{text}' is not a site folder (no site.toml in {site_folder})",
                             file=file, column=f"sites[{i}]")
        key = site_folder.name
        if key in seen:
            raise InputError(f"two sites share the folder name '{key}' ({seen[key]} and "
                             f"{site_folder}); site folder names must be unique", file=file,
                             column=f"sites[{i}]")
        seen[key] = site_folder
        entries.append(SiteEntry(key, site_folder))
    return entries


def _found_sites(folder: Path) -> list[SiteEntry]:
    return [SiteEntry(p.name, p.resolve()) for p in sorted(folder.iterdir())
            if p.is_dir() and not p.name.startswith((".", "_")) and (p / "site.toml").is_file()]
