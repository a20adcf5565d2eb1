"""Where a site's files live: the ledger, stored posteriors, plots and reports.

Every path of a site folder is made here, so that no other module spells a file
name out. Folders are made through `inspection_io.paths.site_subfolder`, which
refuses a link that leads outside the site; ids of zones and members that become
part of a file name go through `inspection_io.paths.safe_file_stem` (in
`assess.report.files.save_figure`).
"""

from __future__ import annotations

from pathlib import Path

from inspection_io.ledger import LEDGER_NAME
from inspection_io.paths import site_subfolder

RESULTS = Path("results")
PLOTS = RESULTS / "plots"
REPORTS = RESULTS / "reports"


def ledger_path(folder: Path) -> Path:
    """The site's ledger file."""
    return Path(folder) / LEDGER_NAME


def has_ledger(folder: Path) -> bool:
    """True when the site has a ledger (some campaign was imported or a result recorded)."""
    return ledger_path(folder).exists()


def plots_folder(folder: Path) -> Path:
    """``results/plots`` of the site, created; refused when a link leads it outside the site."""
    return site_subfolder(folder, *PLOTS.parts)


def reports_folder(folder: Path) -> Path:
    """``results/reports`` of the site, created; refused when a link leads it outside."""
    return site_subfolder(folder, *REPORTS.parts)


__all__ = ["has_ledger", "ledger_path", "plots_folder", "reports_folder"]
