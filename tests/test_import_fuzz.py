"""Property-based: malformed campaign files thrown at the importer and at the CLI.

Whatever the bytes (random headers, units, cells, delimiters, encodings, empty lines),
an import either succeeds completely or raises `InputError` with the ledger unchanged;
through the CLI it exits 0 or 2 and never prints a traceback.
"""

import shutil
import sqlite3
import tempfile
from pathlib import Path

from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st
from typer.testing import CliRunner

import assess.cli.site  # noqa: F401  (registers the sub-application)
from assess.cli import app
from inspection_io import importing
from inspection_io.errors import InputError
from inspection_io.importing import import_file
from inspection_io.ledger import APPEND_ONLY_TABLES, LEDGER_NAME

TEMPLATES = Path(importing.__file__).parent / "templates"

NAMES = ["zone", "member", "date", "note", "core_id", "diameter", "length", "strength",
         "failure_load", "moisture", "bar_in_core", "damaged", "direction", "location_id",
         "cover", "face", "carbonation_depth", "profile_id", "depth_from", "depth_to",
         "chloride", "potential", "specimen_id", "yield_strength", "tensile_strength",
         "elongation", "breakout_id", "bar_diameter", "residual_diameter", "max_pit_depth"]
UNITS = ["", " [mm]", " [cm]", " [in]", " [MPa]", " [N/mm2]", " [psi]", " [kN]", " [lbf]",
         " [% binder]", " [% concrete]", " [mV CSE]", " [V SCE]", " [mV Ag/AgCl]", " [%]",
         " [furlong]", " [", "]", " []", " [mm] [cm]"]
CELLS = ["Z1", "M1", "Z9", "M9", "", "  ", "abc", "30", "30.5", "3,5", "-5", "0", "1e309",
         "nan", "inf", "2026-01-01", "2026-02-30", "01/02/2026", "yes", "no", "maybe", "dry",
         "soaked", "horizontal", "top", "\u00e9", "\u6df7\u51dd\u571f", '"quoted, comma"',
         "\x00", "=1+1"]

header = st.one_of(
    st.tuples(st.sampled_from(NAMES), st.sampled_from(UNITS)).map("".join),
    st.text(max_size=12),
)
cell = st.one_of(st.sampled_from(CELLS), st.text(max_size=8),
                 st.floats(allow_nan=True, allow_infinity=True).map(repr))


@st.composite
def campaign_files(draw):
    """(file name, bytes) of a plausible-to-garbled campaign file."""
    if draw(st.integers(0, 9)) == 0:
        return draw(st.sampled_from(["x.csv", "x.xlsx"])), draw(st.binary(max_size=200))
    if draw(st.booleans()):  # close to a valid cover file: imports sometimes succeed
        headers = ["zone", draw(st.sampled_from(["location_id"] * 3 + ["core_id", "id"])),
                   "cover" + draw(st.sampled_from([" [mm]", " [cm]", " [in]"] * 2
                                                  + ["", " [kg]"]))]
        row = st.tuples(st.sampled_from(["Z1"] * 6 + ["Z9", ""]),
                        st.sampled_from(["P"] * 6 + [""]),
                        st.one_of(st.integers(0, 90).map(str), st.integers(0, 90).map(str),
                                  st.integers(0, 90).map(str), cell))
        rows = [[zone, f"{prefix}{i}" if prefix else "", value]
                for i, (zone, prefix, value) in enumerate(draw(st.lists(row, max_size=5)))]
    else:
        headers = draw(st.lists(header, max_size=7))
        rows = draw(st.lists(st.lists(cell, max_size=8), max_size=6))
    delimiter = draw(st.sampled_from([",", ";", "\t"]))
    lines = [delimiter.join(headers)] + [delimiter.join(r) for r in rows]
    for _ in range(draw(st.integers(0, 2))):  # stray empty lines anywhere
        lines.insert(draw(st.integers(0, len(lines))), "")
    newline = draw(st.sampled_from(["\n", "\r\n"]))
    text = newline.join(lines) + draw(st.sampled_from(["", newline]))
    encoding = draw(st.sampled_from(["utf-8", "utf-8-sig", "latin-1", "cp1252", "utf-16"]))
    return "x.csv", text.encode(encoding, errors="replace")


def dump(site: Path) -> dict:
    conn = sqlite3.connect(site / LEDGER_NAME)
    try:
        return {t: conn.execute(f"SELECT * FROM {t} ORDER BY rowid").fetchall()
                for t in APPEND_ONLY_TABLES}
    finally:
        conn.close()


class Site:
    """A site folder whose ledger already holds one import; fresh copy per example."""

    def __init__(self, root: Path):
        self.base = root / "base"
        folder = self.base / "campaigns" / "first"
        folder.mkdir(parents=True)
        shutil.copy(TEMPLATES / "site.toml", self.base / "site.toml")
        (folder / "campaign.toml").write_text('name = "First"\ndate = 2026-01-01\n')
        seed = folder / "seed.csv"
        seed.write_text("zone,location_id,cover [mm]\nZ1,P1,30\n")
        import_file(self.base, seed)
        seed.unlink()
        self.before = dump(self.base)
        self.ledger_bytes = (self.base / LEDGER_NAME).read_bytes()

    def copy(self, into: Path) -> Path:
        site = into / "site"
        shutil.copytree(self.base, site)
        return site


_BASE = tempfile.TemporaryDirectory()
SITE = Site(Path(_BASE.name))


@settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(campaign_files())
def test_importer_raises_only_input_error_and_never_half_writes(generated):
    name, data = generated
    with tempfile.TemporaryDirectory() as tmp:
        site = SITE.copy(Path(tmp))
        path = site / "campaigns" / "first" / name
        path.write_bytes(data)
        try:
            report = import_file(site, path)
        except InputError as error:
            event("rejected with InputError")
            assert error.file == str(path)
            assert dump(site) == SITE.before
            assert (site / LEDGER_NAME).read_bytes() == SITE.ledger_bytes
            return
        event("imported")
        after = dump(site)
        assert report.imported
        assert after["files"][:1] == SITE.before["files"]
        assert len(after["files"]) == 2 and after["files"][1][6] == report.rows
        new_observations = len(after["observations"]) - len(SITE.before["observations"])
        assert new_observations == report.observations


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(campaign_files())
def test_cli_exits_0_or_2_without_traceback(generated):
    name, data = generated
    with tempfile.TemporaryDirectory() as tmp:
        site = SITE.copy(Path(tmp))
        path = site / "campaigns" / "first" / name
        path.write_bytes(data)
        result = CliRunner().invoke(app, ["site", "import", str(site)])
        assert result.exit_code in (0, 2), result.exception
        assert "Traceback" not in result.stdout + result.stderr
        if result.exit_code == 2:
            assert result.stderr.startswith("Input error:") and result.stdout == ""
            assert dump(site) == SITE.before
