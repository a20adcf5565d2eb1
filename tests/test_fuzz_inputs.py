"""Property-based fuzzing of every campaign-file reader, the site file and campaign.toml.

The property (issue 16, "bad input never passes silently and never ends in a traceback"):
whatever the input, a reader returns a result or raises `InputError` naming the file;
nothing else escapes. A returned result must be sane: finite values, inside the hard
plausibility range of their quantity (`inspection_io.plausibility`), known flags only.

About 2000 generated inputs in all (the ``max_examples`` below), derandomised (fixed
seed, reproducible in CI), no example database, no deadline; small examples keep the
file near 15 s on one core. Hostile cells follow the kinds of issue 16: Python-only
literals (``3_5``, ``inf``, Arabic-Indic digits), overflowing exponents, decimal commas
and thousands separators, console markup, control characters, long cells.
"""

from __future__ import annotations

import math
import re
import tempfile
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from openpyxl import Workbook

from inspection_io import plausibility, units
from inspection_io.errors import InputError
from inspection_io.readers import SPECS, read_campaign_file
from inspection_io.screening import FLAG_REASONS
from inspection_io.site import load_campaign, load_site
from inspection_io.tables import parse_header

FUZZ = settings(deadline=None, database=None, derandomize=True,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large,
                                       HealthCheck.filter_too_much])
TMP = tempfile.TemporaryDirectory()
ROOT = Path(TMP.name)
SITE = {"binder_content": 350.0, "concrete_density": 2400.0, "known_zones": ("Z1", "Z2"),
        "known_members": {"M1": "Z1", "M2": "Z2"}, "member_depths": {"M1": 200.0, "M2": 600.0}}

#: observation quantity -> plausibility range its value must respect when accepted
CHECKED = {"core_strength": "core_strength", "cover": "cover",
           "carbonation_depth": "carbonation_depth", "chloride": "chloride",
           "potential": "potential", "yield_strength": "yield_strength",
           "tensile_strength": "tensile_strength", "elongation": "elongation",
           "max_pit_depth": "pit_depth"}

HOSTILE_NUMBERS = ["3_5", "inf", "-inf", "nan", "NaN", "Infinity", "1e308", "1e309", "-1e6",
                   "1e-9", "1e-400", "\u0663\u0665", "\uff13\uff15", "\u22125", "0x1F", "1" * 60,
                   "1.234", "1,234", "1.234,5", "1,234.5", "3,5", "1 234", "1'234", "12 34",
                   "1.2.3", ".5", "5.", "+7", "--5", "1e", "900", "400", "5000", "-0", "0"]
#: literals Python's float() reads but a campaign file must not hold (weighted up above)
PYTHON_LITERALS = ["3_5", "1_000", "inf", "nan", "Infinity", "\u0663\u0665", "\uff13\uff15",
                   "1e309", "2_5.5"]
HOSTILE_TEXT = ["[/x]", "[bold]", "diameter [unit]", "\x00", "\x1b[2J", "a\nb", "\u202e", "=1+1",
                '"quoted, comma"', "", "  ", "Z1", "Z2", "Z9", "M1", "M2", "M9", "yes", "no",
                "maybe", "2026-01-01", "2026-02-30", "top", "dry", "soaked", "horizontal",
                "x" * 300]


#: observation quantity of each number column (for good values inside the soft range)
RANGE_OF = {("cores", "strength"): "core_strength", ("chloride", "chloride"): "chloride"}


def good_numbers(kind: str, column) -> list[str]:
    """Texts of values inside the soft range of a column (canonical unit, so a few of
    them fall outside after a unit conversion: that is fine, it is a fuzz input)."""
    key = column.plausible or RANGE_OF.get((kind, column.name))
    low, high = plausibility.RANGES[key].soft if key else (0.0, 100.0)
    if column.name == "failure_load":
        low, high = 100.0, 600.0
    if column.name == "chloride":
        low, high = 0.05, 0.8
    steps = [low + (high - low) * f for f in (0.1, 0.25, 0.4, 0.5, 0.6, 0.75, 0.9)]
    return [f"{v:.{d}f}" for v, d in zip(steps, (0, 1, 2, 1, 0, 2, 1))]


def column_strategy(kind: str, column, spec, hostile: bool):
    """Cells of one column: good ones, and in a hostile file also hostile ones."""
    def pool(good, bad):
        return st.sampled_from(good + bad if hostile else good)

    if column.parse == "number":
        good = good_numbers(kind, column)
        return pool(good * 3, [g.replace(".", ",") for g in good] + HOSTILE_NUMBERS)
    if column.parse == "choice":
        return pool([*column.choices], ["x", "[/x]", "DRY "])
    if column.parse == "bool":
        return pool(["yes", "no", "", "y", "TRUE"], ["maybe", "[/x]"])
    if column.parse == "date":
        return pool(["", "2026-01-01", "2009-06-15"], ["2026-02-30", "1/2/26"])
    if column.name == "zone":
        return pool(["Z1", "Z2"], ["Z9", "", "[/x]", " Z1 "])
    if column.name == "member":
        return pool([""], ["M1", "M2", "M9", "[/x]"])
    if column.name == spec.id_column:
        return st.none()             # filled with P<row> (unique), or a hostile text below
    return pool(["", "ok", "bar 12 mm at mid-length"], HOSTILE_TEXT)


def kind_strategy(kind: str, hostile: bool):
    """(kind, columns kept, unit texts, rows, hostile id) for one kind of file."""
    spec = SPECS[kind]
    columns = spec.all_columns()
    units_of = []
    for column in columns:
        if column.dimension:
            accepted = units.accepted_units(column.dimension)
            if hostile:     # any accepted unit (values may leave their range) or a bad one
                choices = [f" [{u}]" for u in accepted] * 3 + [f" ({u})" for u in accepted] \
                    + [" [furlong]", "", " [", " [mm] [cm]"]
            else:           # the canonical unit, in which the good values are plausible
                choices = [f" [{accepted[0]}]"] * 3 + [f" ({accepted[0]})"]
            units_of.append(st.sampled_from(choices))
        else:
            units_of.append(st.sampled_from([""] * 8 + ([" [mm]", " (remark)"] if hostile
                                                         else [" (remark)"])))
    keep = st.lists(st.booleans(), min_size=len(columns), max_size=len(columns))
    cells = st.tuples(*[column_strategy(kind, c, spec, hostile) for c in columns])
    return st.tuples(st.just(kind), keep, st.tuples(*units_of),
                     st.lists(cells, min_size=0 if hostile else 1, max_size=6),
                     st.sampled_from([None] * 6 + HOSTILE_TEXT) if hostile else st.none())


KINDS_CLEAN = st.one_of(*[kind_strategy(kind, False) for kind in sorted(SPECS)])
KINDS_HOSTILE = st.one_of(*[kind_strategy(kind, True) for kind in sorted(SPECS)])


@st.composite
def campaign_table(draw):
    """(kind, headers, rows): a clean file of a random kind, then either nothing, exactly one
    hostile cell (the informative case: if the file is accepted, that cell was legitimate)
    or a fully hostile file."""
    mode = draw(st.sampled_from(["clean", "one hostile cell", "one hostile cell",
                                 "one hostile cell", "hostile"]))
    kind, keep, unit_texts, rows, hostile_id = draw(KINDS_HOSTILE if mode == "hostile"
                                                    else KINDS_CLEAN)
    spec = SPECS[kind]
    columns = spec.all_columns()
    chosen = [i for i, c in enumerate(columns) if c.required or keep[i]
              or c.name in next(iter(spec.one_of), ())]
    headers = [columns[i].name + unit_texts[i] for i in chosen]
    body = []
    for number, row in enumerate(rows):
        cells = []
        for i in chosen:
            value = row[i]
            if value is None:      # the id column
                value = hostile_id if (hostile_id is not None and number == 0) else f"P{number}"
            cells.append(value)
        body.append(cells)
    if mode == "one hostile cell" and body:
        r = draw(st.integers(0, len(body) - 1))
        numeric = [k for k, i in enumerate(chosen) if columns[i].parse == "number"]
        if numeric and draw(st.integers(0, 2)):          # mostly a number cell
            c = draw(st.sampled_from(numeric))
            body[r][c] = draw(st.sampled_from(HOSTILE_NUMBERS + PYTHON_LITERALS))
        else:
            c = draw(st.integers(0, len(chosen) - 1))
            body[r][c] = draw(st.sampled_from(HOSTILE_TEXT))
    return kind, headers, body


def csv_bytes(draw, headers, rows) -> bytes:
    delimiter = draw(st.sampled_from([",", ";", "\t"]))

    def cell(text):
        if delimiter in text or '"' in text or "\n" in text:
            return '"' + text.replace('"', '""') + '"'
        return text

    lines = [delimiter.join(cell(h) for h in headers)]
    lines += [delimiter.join(cell(c) for c in row) for row in rows]
    newline = draw(st.sampled_from(["\n", "\r\n"]))
    encoding = draw(st.sampled_from(["utf-8", "utf-8", "utf-8-sig", "latin-1"]))
    return newline.join(lines).encode(encoding, errors="replace")


FORBIDDEN_IN_NUMBERS = re.compile(r"_|inf|nan|0x|[^\x00-\x7f\u00a0\u202f]", re.IGNORECASE)


def check_result(result):
    """What an accepted file must satisfy."""
    numbers = {c.name for c in SPECS[result.kind].all_columns() if c.parse == "number"}
    for raw in result.raw.columns[1:]:
        if parse_header(raw).name in numbers:
            for cell in result.raw[raw]:
                assert not FORBIDDEN_IN_NUMBERS.search(cell), (raw, cell)
    obs = result.observations
    for quantity, value, flags, row in zip(obs["quantity"], obs["value"], obs["flags"],
                                           obs["source_row"]):
        assert math.isfinite(value), (quantity, value)
        if quantity in CHECKED:
            low, high = plausibility.RANGES[CHECKED[quantity]].hard
            assert low <= value <= high, (quantity, value)
        if quantity == "residual_area_ratio":
            assert 0.0 <= value <= 1.0
        assert all(flag in FLAG_REASONS for flag in flags.split(";") if flag), flags
        assert row >= 2
    assert result.metadata["number_format"]["decimal"] in (".", ",")


def read_or_refuse(path, kind=None):
    try:
        result = read_campaign_file(path, kind, **SITE)
    except InputError as error:
        assert error.file == str(path)
        return None
    check_result(result)
    return result


@settings(FUZZ, max_examples=600)
@given(st.data())
def test_csv_reader_of_every_kind_refuses_cleanly_or_reads_sanely(data):
    kind, headers, rows = data.draw(campaign_table())
    path = ROOT / "fuzz.csv"
    path.write_bytes(csv_bytes(data.draw, headers, rows))
    read_or_refuse(path, kind if data.draw(st.booleans()) else None)


@settings(FUZZ, max_examples=100)
@given(st.data())
def test_xlsx_reader_of_every_kind_refuses_cleanly_or_reads_sanely(data):
    kind, headers, rows = data.draw(campaign_table())
    workbook = Workbook()
    sheet = workbook.active
    sheet.title = data.draw(st.sampled_from([kind, "Sheet1", "cores"]))
    sheet.append(headers)
    for row in rows:
        typed = []
        for cell in row:
            try:
                number = float(cell)
            except ValueError:
                number = None
            use_number = number is not None and math.isfinite(number) and data.draw(st.booleans())
            typed.append(number if use_number else cell.replace("\x00", "").replace("\x1b", ""))
        sheet.append(typed)
    path = ROOT / "fuzz.xlsx"
    workbook.save(path)
    read_or_refuse(path)


@settings(FUZZ, max_examples=500)
@given(st.sampled_from(["x.csv", "x.xlsx"]), st.binary(max_size=300))
def test_any_bytes_are_refused_cleanly_or_read_sanely(name, data):
    path = ROOT / name
    path.write_bytes(data)
    read_or_refuse(path)


GOOD_SITE = (Path(__file__).resolve().parents[1] / "inspection_io" / "templates"
             / "site.toml").read_text()
HOSTILE_TOML_VALUES = ["1e308", "-1e308", "inf", "nan", "-0.0", "0", "1e-9", "5000",
                       "1" + "0" * 40, "0x" + "f" * 300, '"[/x]"', '"XD3"', '"XC3, XD3"',
                       '["XC4", "XF4"]', '"XF4"', "[1, 2]", "[" * 40 + "]" * 40, "{a = 1}",
                       "true", "2026-01-01", '"x"', '""', '"\\u0000"', "'''a\nb'''"]


@st.composite
def mutated_toml(draw, text):
    lines = text.splitlines()
    for _ in range(draw(st.integers(1, 3))):
        index = draw(st.integers(0, len(lines) - 1))
        action = draw(st.integers(0, 5))
        line = lines[index]
        if action <= 2 and "=" in line and not line.lstrip().startswith("#"):
            key = line.split("=", 1)[0]
            lines[index] = f"{key}= {draw(st.sampled_from(HOSTILE_TOML_VALUES))}"
        elif action == 3:
            del lines[index]
        elif action == 4:
            lines.insert(index, draw(st.sampled_from(
                ["[members]", "[zones]", "target_beta = 3.0", 'target_beta_reason = "agreed"',
                 "steel_area = 500000", "width = 1e-6", "[members.X]", "exposure = \"XS2\"",
                 "[[members]]", "x = [" * 40])))
        else:
            lines[index] = line[: draw(st.integers(0, len(line)))]
    return "\n".join(lines) + "\n"


@settings(FUZZ, max_examples=550)
@given(mutated_toml(GOOD_SITE))
def test_site_file_refuses_cleanly_or_loads_sanely(text):
    path = ROOT / "site.toml"
    path.write_text(text, encoding="utf-8")
    try:
        site = load_site(path)
    except InputError as error:
        assert error.file == str(path)
        return
    assert site.members
    for member in site.members.values():
        for value in (member.depth, member.cover, member.bar_diameter, member.width):
            assert math.isfinite(value) and value > 0
        assert member.tension_steel_area / (member.width * member.depth) <= \
            plausibility.MAX_REINFORCEMENT_RATIO
        assert (member.target_beta is None) == (member.target_beta_reason is None)
    for zone in site.zones.values():
        assert zone.exposure in ("exposed deck", "sheltered soffit", "internal")


GOOD_CAMPAIGN = 'name = "2009 first survey"\ndate = 2009-06-15\ndescription = "Cores"\n'


@settings(FUZZ, max_examples=250)
@given(mutated_toml(GOOD_CAMPAIGN) | st.text(max_size=80))
def test_campaign_file_refuses_cleanly_or_loads_sanely(text):
    path = ROOT / "campaign.toml"
    path.write_bytes(text.encode("utf-8", errors="replace"))
    try:
        info = load_campaign(path)
    except InputError as error:
        assert error.file == str(path)
        return
    assert isinstance(info.name, str) and info.name.strip()
