"""Campaign-file readers: good files of every kind (CSV and XLSX) and broken ones.

Every broken case checks the InputError's message, file, row and column.
Row numbers are as a spreadsheet shows them (header = row 1), docs/data-formats.md.
"""

import datetime as dt
import json
import math
import re
from pathlib import Path

import pytest
from openpyxl import Workbook

from inspection_io.errors import InputError
from inspection_io.readers import OBSERVATION_COLUMNS, detect_kind, read_campaign_file

DATA = Path(__file__).parent / "data_files"
SITE = {"binder_content": 350.0, "concrete_density": 2400.0}


def write_csv(tmp_path, text, name="file.csv"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def write_xlsx(tmp_path, sheets, name="file.xlsx"):
    workbook = Workbook()
    workbook.remove(workbook.active)
    for title, rows in sheets.items():
        sheet = workbook.create_sheet(title)
        for row in rows:
            sheet.append(row)
    path = tmp_path / name
    workbook.save(path)
    return path


# ---------------------------------------------------------------- good files


def test_cores_csv_columns_rows_and_flags():
    result = read_campaign_file(DATA / "cores_good.csv")
    obs = result.observations
    assert result.kind == "cores"
    assert tuple(obs.columns) == OBSERVATION_COLUMNS
    assert len(obs) == 2 * 7
    # the blank line in the file is spreadsheet row 7, so C6 is on row 8
    assert obs.loc[obs.item_id == "C6", "source_row"].unique().tolist() == [8]
    c1 = obs[obs.item_id == "C1"].set_index("quantity")
    assert c1.loc["core_strength", "value"] == 34.0
    assert c1.loc["core_strength", "date"] == "2009-06-15"
    assert obs.loc[obs.item_id == "C5", "date"].iloc[0] is None
    flags = obs.groupby("item_id")["flags"].first()
    assert flags["C4"] == "bar_in_core"
    assert flags["C6"] == "damaged"
    assert flags["C7"] == "l/d outside 1-2"  # 90 mm long, 100 mm diameter: l/d = 0.9
    assert flags["C1"] == ""
    extra = json.loads(obs.loc[obs.item_id == "C4", "extra"].iloc[0])
    assert extra["note"] == "bar 12 mm at mid-length"
    assert extra["diameter"] == 75.0


def test_raw_and_metadata_keep_what_the_file_said():
    result = read_campaign_file(DATA / "cores_good.csv")
    assert list(result.raw.columns[:3]) == ["source_row", "Core ID", "Zone"]
    assert result.raw.loc[0, "Strength [MPa]"] == "34.0"
    assert result.raw["source_row"].tolist() == [2, 3, 4, 5, 6, 8, 9]
    meta = result.metadata
    assert meta["file"] == "cores_good.csv" and meta["format"] == "csv"
    assert meta["units"]["Diameter [mm]"] == "mm"
    assert meta["kind_detected"] is True
    assert "Grubbs" in meta["outlier_test"]


def test_cores_from_failure_load_in_inch_pound_units():
    obs = read_campaign_file(DATA / "cores_load_inch.csv").observations
    strength = obs[obs.quantity == "core_strength"].set_index("item_id")["value"]
    # K1: 70000 lbf on a 4 in core = 70000 / (pi * 2^2) psi; 1 psi = 6.894757e-3 MPa (NIST SP 811)
    assert strength["K1"] == pytest.approx(70000 / (math.pi * 4.0) * 6.894757e-3, rel=1e-6)
    assert strength["K2"] == pytest.approx(5200 * 6.894757e-3, rel=1e-6)
    meta = read_campaign_file(DATA / "cores_load_inch.csv").metadata
    assert "diameter: in -> mm (x 25.4)" in meta["conversions"]


def test_tensile_ksi_to_mpa():
    obs = read_campaign_file(DATA / "tensile_good.csv").observations
    t1 = obs[obs.item_id == "T1"].set_index("quantity")["value"]
    assert t1["yield_strength"] == pytest.approx(66.0 * 6.894757, rel=1e-6)  # NIST SP 811
    assert t1["elongation"] == 18.5
    assert set(obs[obs.item_id == "T2"].quantity) == {"yield_strength"}


def test_cover_semicolon_decimal_comma_cm():
    result = read_campaign_file(DATA / "cover_semicolon_cm.csv")
    assert result.kind == "cover" and result.metadata["delimiter"] == ";"
    assert result.observations["value"].tolist() == pytest.approx([32.0, 28.0, 41.0, 0.0])
    assert json.loads(result.observations["extra"].iloc[2])["face"] == "top"


def test_carbonation_zero_depth_allowed():
    obs = read_campaign_file(DATA / "carbonation_good.csv").observations
    assert obs["value"].tolist() == [0.0, 7.5, 12.0]
    assert set(obs.unit) == {"mm"}


def test_chloride_by_binder_with_depth_mid():
    obs = read_campaign_file(DATA / "chloride_binder.csv").observations
    assert obs["item_id"].tolist() == ["CP1"] * 3 + ["CP2"] * 2
    mids = [json.loads(e)["depth_mid"] for e in obs["extra"]]
    assert mids == [5.0, 15.0, 25.0, 2.5, 10.0]


def test_chloride_by_concrete_converted_to_binder():
    obs = read_campaign_file(DATA / "chloride_concrete.csv", **SITE).observations
    # % binder = % concrete * density / binder content (docs/data-formats.md)
    assert obs["value"].tolist() == pytest.approx([0.30 * 2400 / 350, 0.21 * 2400 / 350])
    extra = json.loads(obs["extra"].iloc[1])
    assert (extra["depth_from"], extra["depth_to"]) == (10.0, 20.0)  # cm -> mm
    assert extra["chloride_unit"] == "% concrete"


def test_halfcell_sce_and_agcl_volts_to_cse():
    sce = read_campaign_file(DATA / "halfcell_sce.csv").observations
    # E_CSE = E_SCE - 75 mV (docs/data-formats.md, common practice)
    assert sce["value"].tolist() == [-225.0, -395.0, -485.0]
    agcl = read_campaign_file(DATA / "halfcell_agcl_volt.csv").observations
    # E_CSE = E_Ag/AgCl - 119 mV
    assert agcl["value"].tolist() == pytest.approx([-81.0 - 119.0, -250.0 - 119.0])
    extra = json.loads(agcl["extra"].iloc[0])
    assert extra["electrode"] == "Ag/AgCl" and extra["potential_unit"] == "V Ag/AgCl"
    assert extra["potential_as_read"] == pytest.approx(-0.081)


def test_section_loss_area_ratio_and_pits():
    obs = read_campaign_file(DATA / "section_loss_good.csv").observations
    b3 = obs[obs.item_id == "B3"].set_index("quantity")["value"]
    assert b3["residual_area_ratio"] == pytest.approx((10.0 / 12.0) ** 2)
    assert b3["max_pit_depth"] == 2.0
    assert obs[obs.item_id == "B2"].quantity.tolist() == ["max_pit_depth"]


def test_face_of_a_reading_is_kept_and_checked(tmp_path):
    path = write_csv(
        tmp_path,
        "breakout_id,zone,member,face,bar_diameter [mm],residual_diameter [mm]\n"
        "B1,L3,S3-02,top,12,11.0\nB2,L3,S3-02,,12,11.5\n",
    )
    obs = read_campaign_file(path).observations
    faces = [json.loads(e).get("face") for e in obs["extra"]]
    assert faces == ["top", None]
    bad = write_csv(tmp_path, "breakout_id,zone,face,bar_diameter [mm],max_pit_depth [mm]\n"
                    "B1,L3,soffit,12,1.0\n", name="bad.csv")
    with pytest.raises(InputError, match="face"):
        read_campaign_file(bad)


def test_known_zones_and_member_mapping_accept_good_file():
    result = read_campaign_file(DATA / "section_loss_good.csv", known_zones={"L1", "L2"},
                                known_members={"S1-01": "L1", "S2-01": "L2"})
    assert len(result.observations) == 4


# ---------------------------------------------------------------- XLSX


CORE_ROWS = [["core_id", "zone", "date", "diameter [mm]", "length [mm]", "strength [MPa]"],
             ["X1", "L1", dt.datetime(2010, 5, 4), 100, 200, 35.5],
             ["X2", "L1", None, 100, 200, 33]]


def test_xlsx_first_sheet_numbers_and_dates(tmp_path):
    path = write_xlsx(tmp_path, {"Sheet1": CORE_ROWS})
    result = read_campaign_file(path)
    obs = result.observations
    assert result.kind == "cores" and result.metadata["sheet"] == "Sheet1"
    assert obs.loc[obs.item_id == "X1", "date"].iloc[0] == "2010-05-04"
    assert obs.loc[obs.quantity == "core_strength", "value"].tolist() == [35.5, 33.0]
    assert result.raw.loc[1, "strength [MPa]"] == "33"


def test_xlsx_sheet_named_after_kind_wins_and_others_are_reported(tmp_path):
    cover = [["location_id", "zone", "cover [in]"], ["P1", "L1", 1.5]]
    path = write_xlsx(tmp_path, {"notes": [["written by the survey team"]], "Cover": cover,
                                 "plot": [["x", "y"], [1, 2]]})
    result = read_campaign_file(path)
    assert result.kind == "cover"
    assert result.metadata["sheet"] == "Cover"
    assert result.metadata["ignored_sheets"] == ["notes", "plot"]
    assert result.observations["value"].tolist() == pytest.approx([1.5 * 25.4])


def test_xlsx_given_kind_reads_its_sheet(tmp_path):
    path = write_xlsx(tmp_path, {"summary": [["a"], [1]], "cores": CORE_ROWS})
    result = read_campaign_file(path, kind="cores")
    assert result.metadata["sheet"] == "cores"
    assert result.metadata["ignored_sheets"] == ["summary"]


def test_xlsx_bad_cell_reports_sheet_row(tmp_path):
    rows = [list(r) for r in CORE_ROWS] + [["X3", "L1", None, 100, "broken", 30]]
    path = write_xlsx(tmp_path, {"cores": rows})
    with pytest.raises(InputError) as info:
        read_campaign_file(path)
    err = info.value
    assert (err.file, err.row, err.column) == (str(path), 4, "length [mm]")
    assert "expected a number [mm], found 'broken'" in err.message


# ---------------------------------------------------------------- broken files

CORE_HEAD = "core_id,zone,member,date,diameter [mm],length [mm],strength [MPa]\n"
GOOD_CORE = "C1,L1,S1,2009-06-15,100,200,34\n"

BROKEN = [
    # (id, file text, read options, row, column, message fragment)
    ("missing required column", "core_id,zone,length [mm],strength [MPa]\nC1,L1,200,34\n", {},
     1, "diameter", "missing required column 'diameter' for a cores file (with a unit: mm, cm, in)"),
    ("missing strength and load", "core_id,zone,diameter [mm],length [mm]\nC1,L1,100,200\n", {},
     1, None, "needs one of the columns 'strength' or 'failure_load'"),
    ("unknown unit", "core_id,zone,diameter [ft],length [mm],strength [MPa]\nC1,L1,1,200,34\n",
     {}, 1, "diameter [ft]", "unknown unit 'ft'; accepted: mm, cm, in"),
    ("missing unit", "core_id,zone,diameter,length [mm],strength [MPa]\nC1,L1,100,200,34\n", {},
     1, "diameter", "missing unit: write 'diameter [unit]' with one of mm, cm, in"),
    ("unit on id column", "core_id [mm],zone,diameter [mm],length [mm],strength [MPa]\n"
     "C1,L1,100,200,34\n", {}, 1, "core_id [mm]", "takes no unit"),
    ("text in number", CORE_HEAD + GOOD_CORE + "C2,L1,S1,,100,200,about 30\n", {}, 3,
     "strength [MPa]", "expected a number [MPa], found 'about 30'"),
    ("negative strength", CORE_HEAD + "C1,L1,S1,,100,200,-34\n", {}, 2, "strength [MPa]",
     "strength cannot be zero or negative: found -34 [MPa]"),
    ("zero strength", CORE_HEAD + "C1,L1,S1,,100,200,0\n", {}, 2, "strength [MPa]",
     "strength cannot be zero or negative"),
    ("zero diameter", CORE_HEAD + "C1,L1,S1,,0,200,34\n", {}, 2, "diameter [mm]",
     "diameter cannot be zero or negative"),
    ("negative length", CORE_HEAD + "C1,L1,S1,,100,-200,34\n", {}, 2, "length [mm]",
     "length cannot be zero or negative"),
    ("empty required cell", CORE_HEAD + "C1,L1,S1,,,200,34\n", {}, 2, "diameter [mm]",
     "empty cell: a diameter [mm] is required"),
    ("empty zone", CORE_HEAD + "C1,,S1,,100,200,34\n", {}, 2, "zone",
     "empty cell: a zone is required"),
    ("duplicate ids", CORE_HEAD + GOOD_CORE + "C2,L1,S1,,100,200,33\nC1,L1,S1,,100,200,30\n", {},
     4, "core_id", "duplicate core_id 'C1' in rows 2 and 4"),
    ("unknown zone", CORE_HEAD + "C1,L9,S1,,100,200,34\n", {"known_zones": ["L1", "L2"]}, 2,
     "zone", "unknown zone 'L9'; zones in the site file: L1, L2"),
    ("unknown member", CORE_HEAD + "C1,L1,S7,,100,200,34\n", {"known_members": ["S1", "S2"]}, 2,
     "member", "unknown member 'S7'; members in the site file: S1, S2"),
    ("member in other zone", CORE_HEAD + "C1,L1,S2,,100,200,34\n",
     {"known_members": {"S1": "L1", "S2": "L2"}}, 2, "member",
     "member 'S2' belongs to zone 'L2' in the site file, not to zone 'L1'"),
    ("bad date", CORE_HEAD + "C1,L1,S1,15/06/2009,100,200,34\n", {}, 2, "date",
     "bad date '15/06/2009': expected an ISO date YYYY-MM-DD"),
    ("impossible date", CORE_HEAD + "C1,L1,S1,2009-13-01,100,200,34\n", {}, 2, "date",
     "bad date '2009-13-01'"),
    ("bad yes/no", "core_id,zone,diameter [mm],length [mm],strength [MPa],bar_in_core\n"
     "C1,L1,100,200,34,maybe\n", {}, 2, "bar_in_core", "expected yes or no, found 'maybe'"),
    ("bad moisture", "core_id,zone,diameter [mm],length [mm],strength [MPa],moisture\n"
     "C1,L1,100,200,34,wet\n", {}, 2, "moisture",
     "expected one of as-received, dry, soaked, found 'wet'"),
    ("strength disagrees with load",
     "core_id,zone,diameter [mm],length [mm],strength [MPa],failure_load [kN]\n"
     "C1,L1,100,200,34,400\n", {}, 2, "strength [MPa]", "disagrees with 4F/(pi d^2) = 50.93 MPa"),
    ("neither strength nor load",
     "core_id,zone,diameter [mm],length [mm],strength [MPa],failure_load [kN]\n"
     "C1,L1,100,200,,\n", {}, 2, "strength [MPa]", "empty: give strength or failure_load"),
    ("value without header", CORE_HEAD + "C1,L1,S1,,100,200,34,extra\n", {}, 2, None,
     "value 'extra' lies in a column without header"),
    ("negative cover", "location_id,zone,cover [mm]\nP1,L1,30\nP2,L1,-2\n", {}, 3,
     "cover [mm]", "cover cannot be negative: found -2 [mm]"),
    ("no electrode", "location_id,zone,potential [mV]\nH1,L1,-200\n", {}, 1, "potential [mV]",
     "does not name the reference electrode"),
    ("wrong electrode", "location_id,zone,potential [mV SHE]\nH1,L1,-200\n", {}, 1,
     "potential [mV SHE]", "unknown or unsupported reference electrode 'SHE'"),
    ("chloride % concrete without site data",
     "profile_id,zone,depth_from [mm],depth_to [mm],chloride [% concrete]\nP,L1,0,10,0.2\n",
     {"binder_content": 350.0}, 1, "chloride [% concrete]",
     "needs the site's [materials] concrete_density"),
    ("depth_to not below depth_from",
     "profile_id,zone,depth_from [mm],depth_to [mm],chloride [% binder]\nP,L1,0,10,1\n"
     "P,L1,10,10,0.5\n", {}, 3, "depth_to [mm]",
     "depth_to (10 mm) must be greater than depth_from (10 mm)"),
    ("overlapping increments",
     "profile_id,zone,depth_from [mm],depth_to [mm],chloride [% binder]\nP,L1,0,10,1\n"
     "P,L1,5,15,0.5\n", {}, 3, "depth_from [mm]", "overlaps 0-10 mm in row 2"),
    ("residual above original",
     "breakout_id,zone,bar_diameter [mm],residual_diameter [mm]\nB1,L1,12,12.4\n", {}, 2,
     "residual_diameter [mm]", "residual diameter 12.4 mm is larger than the original"),
    ("tensile below yield",
     "specimen_id,zone,diameter [mm],yield_strength [MPa],tensile_strength [MPa]\n"
     "T1,L1,12,520,480\n", {}, 2, "tensile_strength [MPa]", "below the yield strength"),
    ("duplicate header", "core_id,zone,Zone,diameter [mm]\nC1,L1,L1,100\n", {}, 1, "Zone",
     "duplicate column 'zone'"),
]


@pytest.mark.parametrize("case, text, options, row, column, message", BROKEN,
                         ids=[case[0] for case in BROKEN])
def test_broken_file_names_file_row_column(tmp_path, case, text, options, row, column, message):
    path = write_csv(tmp_path, text)
    with pytest.raises(InputError) as info:
        read_campaign_file(path, **options)
    err = info.value
    assert message in err.message
    assert err.file == str(path)
    assert err.row == row
    assert err.column == column


@pytest.mark.parametrize("name, row, column, message", [
    ("broken_cores_text_strength.csv", 3, "strength [MPa]", "found 'n/a'"),
    ("broken_cores_duplicate.csv", 4, "core_id", "duplicate core_id 'C1' in rows 2 and 4"),
    ("broken_empty.csv", None, None, "the file is empty"),
    ("broken_header_only.csv", None, None, "no data rows below the header"),
    ("broken_halfcell_no_electrode.csv", 1, "potential [mV]", "reference electrode"),
])
def test_broken_files_on_disk(name, row, column, message):
    with pytest.raises(InputError) as info:
        read_campaign_file(DATA / name)
    err = info.value
    assert message in err.message
    assert (err.file, err.row, err.column) == (str(DATA / name), row, column)


def test_first_bad_cell_is_reported_by_row_then_column(tmp_path):
    text = CORE_HEAD + GOOD_CORE + "C2,L1,S1,,-1,200,x\n" + "C3,L1,S1,,abc,200,34\n"
    with pytest.raises(InputError) as info:
        read_campaign_file(write_csv(tmp_path, text))
    assert (info.value.row, info.value.column) == (3, "diameter [mm]")


def test_unknown_kind_lists_kinds(tmp_path):
    path = write_csv(tmp_path, CORE_HEAD + GOOD_CORE)
    with pytest.raises(InputError, match="unknown record kind 'core'; choose one of cores, "
                                         "tensile, cover, carbonation, chloride, halfcell"):
        read_campaign_file(path, kind="core")


def test_unsupported_file_type(tmp_path):
    path = tmp_path / "cores.txt"
    path.write_text(CORE_HEAD + GOOD_CORE)
    with pytest.raises(InputError, match="unsupported file type '.txt'"):
        read_campaign_file(path)


# ---------------------------------------------------------------- kind detection


@pytest.mark.parametrize("headers, kind", [
    (["Core ID", "zone", "diameter [mm]"], "cores"),
    (["specimen_id", "zone"], "tensile"),
    (["location_id", "zone", "cover [mm]"], "cover"),
    (["location_id", "zone", "carbonation_depth [mm]"], "carbonation"),
    (["profile_id", "zone", "chloride [% binder]"], "chloride"),
    (["location_id", "zone", "potential [mV CSE]"], "halfcell"),
    (["breakout_id", "zone"], "section_loss"),
])
def test_detect_kind(headers, kind):
    assert detect_kind(headers) == kind


def test_detect_kind_none_lists_identifying_columns():
    with pytest.raises(InputError) as info:
        detect_kind(["zone", "value [mm]"], file="x.csv")
    assert "cores: core_id" in info.value.message
    assert "cover: location_id + cover" in info.value.message
    assert info.value.file == "x.csv" and info.value.row == 1


def test_detect_kind_several():
    with pytest.raises(InputError, match=r"fit several kinds \(cover, halfcell\)"):
        detect_kind(["location_id", "zone", "cover [mm]", "potential [mV CSE]"])


# ---------------------------------------------------------------- hostile files (issue 16)
# Each case below crashed with a traceback, hung, or was silently accepted before the
# readers were hardened; each must now end in a clean InputError naming file and row.

COVER = "zone,location_id,cover [mm]\nZ1,P1,30\n"


@pytest.mark.parametrize("size", [200_000, 5_000_000])
def test_huge_cell_is_refused_cleanly_not_by_the_csv_field_limit(tmp_path, size):
    # Python docs, csv.field_size_limit: 131072 characters by default; csv raises _csv.Error
    import csv
    big = "x" * size
    with pytest.raises(csv.Error, match="field larger than field limit"):
        list(csv.reader([f'Z1,P2,"{big}"']))
    for text in (COVER + f"Z1,P2,{big}\n", COVER + f'Z1,P2,"{big}"\n', COVER + f'Z1,"P2,{big}\n'):
        with pytest.raises(InputError) as info:
            read_campaign_file(write_csv(tmp_path, text))
        assert info.value.row == 3 and "characters" in info.value.message
        assert len(str(info.value)) < 400          # the cell is not echoed back


def test_cell_below_the_csv_limit_but_above_ours_is_refused(tmp_path):
    from inspection_io.tables import MAX_CELL_CHARS
    path = write_csv(tmp_path, COVER + "Z1,P2,30,\nZ1,P3,31,\n".replace(
        "Z1,P3", "Z1," + "p" * (MAX_CELL_CHARS + 1)))
    with pytest.raises(InputError) as info:
        read_campaign_file(path)
    assert info.value.row == 4 and f"{MAX_CELL_CHARS + 1} characters" in info.value.message


def test_file_row_and_column_limits(tmp_path, monkeypatch):
    from inspection_io import tables
    monkeypatch.setattr(tables, "MAX_FILE_BYTES", 40)
    with pytest.raises(InputError, match="at most 40 bytes"):
        read_campaign_file(write_csv(tmp_path, COVER + "Z1,P2,31\nZ1,P3,32\n"))
    monkeypatch.setattr(tables, "MAX_FILE_BYTES", 10**6)
    monkeypatch.setattr(tables, "MAX_ROWS", 3)
    rows = "".join(f"Z1,P{i},30\n" for i in range(10, 15))
    with pytest.raises(InputError, match="more than 3 data rows") as info:
        read_campaign_file(write_csv(tmp_path, "zone,location_id,cover [mm]\n" + rows))
    assert info.value.row == 5
    monkeypatch.setattr(tables, "MAX_ROWS", 100_000)
    wide = "Z1,P2,31" + "," * 300 + "stray\n"
    with pytest.raises(InputError, match="more than 200 columns") as info:
        read_campaign_file(write_csv(tmp_path, COVER + wide))
    assert "column 303" in info.value.message


def xlsx_with_sheet_xml(tmp_path, edit, name="hostile.xlsx"):
    """A good cover workbook whose sheet XML is rewritten by `edit` (bytes -> bytes)."""
    import zipfile
    good = write_xlsx(tmp_path, {"cover": [["zone", "location_id", "cover [mm]"], ["Z1", "P1", 30],
                                           ["Z1", "P2", 31.5]]}, name="good.xlsx")
    with zipfile.ZipFile(good) as archive:
        parts = {info.filename: archive.read(info.filename) for info in archive.infolist()}
    sheet = next(n for n in parts if n.startswith("xl/worksheets/sheet"))
    parts[sheet] = edit(parts[sheet])
    path = tmp_path / name
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED, compresslevel=9) as archive:
        for part, data in parts.items():
            archive.writestr(part, data)
    return path


def test_xlsx_stray_value_at_the_last_cell_is_refused_without_building_the_grid(tmp_path):
    # ECMA-376 sheet limits: 16384 columns (XFD) x 1048576 rows; a 5 kB file
    workbook = Workbook()
    sheet = workbook.active
    for row in (["zone", "location_id", "cover [mm]"], ["Z1", "P1", 30]):
        sheet.append(row)
    sheet.cell(row=1048576, column=16384, value="stray")
    path = tmp_path / "stray.xlsx"
    workbook.save(path)
    assert path.stat().st_size < 10_000
    with pytest.raises(InputError) as info:
        read_campaign_file(path)
    assert info.value.row == 1048576 and "column 16384" in info.value.message


def test_xlsx_styled_empty_cell_far_away_and_a_lying_dimension_are_ignored(tmp_path):
    path = xlsx_with_sheet_xml(tmp_path, lambda xml: re.sub(
        rb'<dimension ref="[^"]*"/>', b'<dimension ref="A1:XFD1048576"/>', xml).replace(
        b"</sheetData>", b'<row r="1048576"><c r="XFD1048576" s="0"/></row></sheetData>'))
    obs = read_campaign_file(path).observations
    assert obs["value"].tolist() == [30.0, 31.5]


def test_xlsx_zip_bomb_is_refused_from_the_zip_directory(tmp_path):
    # a 20 MB run of blanks in a comment compresses about 1000:1 (deflate's limit is ~1032:1,
    # RFC 1951); the ZIP central directory states the uncompressed size (PKWARE APPNOTE 4.3.12)
    path = xlsx_with_sheet_xml(tmp_path, lambda xml: xml.replace(
        b"<sheetData>", b"<!--" + b" " * (20 * 1024 * 1024) + b"--><sheetData>"))
    assert path.stat().st_size < 200_000
    with pytest.raises(InputError) as info:
        read_campaign_file(path)
    assert "expands" in info.value.message and "compression bomb" in info.value.message


def test_xlsx_part_and_total_size_limits(tmp_path, monkeypatch):
    from inspection_io import tables
    path = write_xlsx(tmp_path, {"cover": [["zone", "location_id", "cover [mm]"], ["Z1", "P1", 30]]})
    monkeypatch.setattr(tables, "MAX_XLSX_PART_BYTES", 100)
    with pytest.raises(InputError, match="expands to .* bytes; at most 100 bytes"):
        read_campaign_file(path)
    monkeypatch.setattr(tables, "MAX_XLSX_PART_BYTES", 10**9)
    monkeypatch.setattr(tables, "MAX_XLSX_TOTAL_BYTES", 1000)
    with pytest.raises(InputError, match="the workbook expands to"):
        read_campaign_file(path)


@pytest.mark.parametrize("value, words", [
    (b"1e999", "infinite"),                       # float('1e999') = inf in openpyxl
    (b"1" * 5000, "ValueError"),                  # int() of 5000 digits (Python's 4300 limit)
    (b"inf", "ValueError"),
])
def test_xlsx_unreadable_numbers_are_clean_errors(tmp_path, value, words):
    path = xlsx_with_sheet_xml(tmp_path, lambda xml: re.sub(rb"<v>31.5</v>", b"<v>" + value +
                                                            b"</v>", xml))
    with pytest.raises(InputError) as info:
        read_campaign_file(path)
    assert words in info.value.message


def test_not_a_zip_and_damaged_xlsx(tmp_path):
    for data in (b"plain text", b"PK\x03\x04" + b"\x00" * 40):
        path = tmp_path / "bad.xlsx"
        path.write_bytes(data)
        with pytest.raises(InputError, match="cannot open as an Excel workbook"):
            read_campaign_file(path)


@pytest.mark.parametrize("header, unit", [("Diameter (mm)", "mm"), ("diameter [mm]", "mm"),
                                          ("Diameter ( cm )", "cm"), ("DIAMETER (in)", "in")])
def test_lab_style_unit_in_parentheses(tmp_path, header, unit):
    given = {"mm": 100, "cm": 10, "in": 4}[unit]
    text = f"zone,core_id,{header},length [mm],Strength (N/mm2),Date (YYYY-MM-DD)\n" \
           f"Z1,C1,{given},200,30,2009-06-15\n"
    result = read_campaign_file(write_csv(tmp_path, text))
    assert result.metadata["units"][header] == unit
    diameter = json.loads(result.observations["extra"].iloc[0])["diameter"]
    assert diameter == pytest.approx(given * {"mm": 1.0, "cm": 10.0, "in": 25.4}[unit])


def test_unknown_unit_in_parentheses_is_refused(tmp_path):
    with pytest.raises(InputError, match="unknown unit 'furlong'") as info:
        read_campaign_file(write_csv(tmp_path, "zone,location_id,Cover (furlong)\nZ1,P1,3\n"))
    assert info.value.column == "Cover (furlong)"


def test_semicolon_file_with_only_ambiguous_numbers_is_refused(tmp_path):
    path = write_csv(tmp_path, "zone;location_id;cover [mm]\nZ1;P1;35\nZ1;P2;1.234\n")
    with pytest.raises(InputError) as info:
        read_campaign_file(path)
    assert (info.value.row, info.value.column) == (3, "cover [mm]")
    assert "cannot tell whether '.'" in info.value.message


def test_semicolon_file_with_decimal_comma_and_thousands_point(tmp_path):
    path = write_csv(tmp_path, "zone;profile_id;depth_from [mm];depth_to [mm];chloride [% binder]\n"
                               "Z1;P1;0;10;1,25\nZ1;P1;10;20;0,5\n")
    result = read_campaign_file(path)
    assert result.observations["value"].tolist() == [1.25, 0.5]
    text = "zone;location_id;potential [mV CSE]\nZ1;P1;-1.234\nZ1;P2;-0,5\n"
    result = read_campaign_file(write_csv(tmp_path, text))
    assert result.observations["value"].tolist() == [-1234.0, -0.5]
    fmt = result.metadata["number_format"]
    assert (fmt["decimal"], fmt["thousands"]) == (",", ".")
    assert "row 3, column 'potential [mV CSE]'" in fmt["evidence"]
    assert any("decimal comma" in c for c in result.metadata["conversions"])


def test_comma_file_states_decimal_point_and_reads_quoted_thousands(tmp_path):
    result = read_campaign_file(write_csv(tmp_path, 'zone,location_id,potential [mV CSE]\n'
                                                    'Z1,P1,"-1,234.5"\nZ1,P2,-200\n'))
    assert result.observations["value"].tolist() == [-1234.5, -200.0]
    assert result.metadata["number_format"]["description"] == \
        "decimal point, thousands separator ','"


def test_mixed_decimal_conventions_in_one_file_are_refused(tmp_path):
    path = write_csv(tmp_path, "zone;location_id;cover [mm]\nZ1;P1;30,5\nZ1;P2;31.5\n")
    with pytest.raises(InputError, match="mix conventions") as info:
        read_campaign_file(path)
    assert info.value.row == 3


def test_xlsx_stored_numbers_are_never_thousands(tmp_path):
    path = write_xlsx(tmp_path, {"cover": [["zone", "location_id", "cover [mm]"],
                                           ["Z1", "P1", 1.234], ["Z1", "P2", 30]]})
    assert read_campaign_file(path).observations["value"].tolist() == [1.234, 30.0]
    mixed = write_xlsx(tmp_path, {"cover": [["zone", "location_id", "cover [mm]"],
                                            ["Z1", "P1", 1.5], ["Z1", "P2", "30,5"]]}, "m.xlsx")
    with pytest.raises(InputError, match="mix conventions"):
        read_campaign_file(mixed)


@pytest.mark.parametrize("cell, words", [("3_5", "'_'"), ("\u0663\u0665", "digits other than"),
                                         ("inf", "infinite"), ("nan", "not-a-number"),
                                         ("1e308", "plausible range"), ("-0", None)])
def test_python_only_literals_are_refused_in_files(tmp_path, cell, words):
    path = write_csv(tmp_path, f"zone,location_id,cover [mm]\nZ1,P1,30\nZ1,P2,{cell}\n")
    if words is None:                      # "-0" is a number: zero cover
        assert read_campaign_file(path).observations["value"].tolist() == [30.0, 0.0]
        return
    with pytest.raises(InputError) as info:
        read_campaign_file(path)
    assert (info.value.row, info.value.column) == (3, "cover [mm]") and words in info.value.message


def test_markup_and_control_characters_in_cells_are_quoted_safely(tmp_path):
    from rich.markup import render

    from inspection_io.console_text import escape_markup
    path = write_csv(tmp_path, "zone,location_id,cover [mm]\n[/x],P1,30\n")
    with pytest.raises(InputError) as info:
        read_campaign_file(path, known_zones=["Z1"])
    assert "unknown zone '[/x]'" in str(info.value)
    assert render(f"[red]Input error:[/] {escape_markup(str(info.value))}").plain == \
        f"Input error: {info.value}"
    path = write_csv(tmp_path, "zone,location_id,cover [mm]\nZ1,P1,30\x1b[2J\n")
    with pytest.raises(InputError) as info:
        read_campaign_file(path)
    assert "\x1b" not in str(info.value) and "\\x1b" in str(info.value)


def test_chloride_below_detection_limit_is_marked_not_substituted(tmp_path):
    path = write_csv(
        tmp_path,
        "profile_id,zone,depth_from [mm],depth_to [mm],chloride [% binder],below_limit\n"
        "P,L1,0,10,1.2,no\nP,L1,10,20,0.05,yes\n",
    )
    obs = read_campaign_file(path).observations
    extras = [json.loads(e) for e in obs["extra"]]
    assert [e.get("below_limit", False) for e in extras] == [False, True]
    assert obs["value"].tolist() == [1.2, 0.05]  # the limit, marked as a bound
    bad = write_csv(
        tmp_path,
        "profile_id,zone,depth_from [mm],depth_to [mm],chloride [% binder],below_limit\n"
        "P,L1,0,10,0,yes\n",
        name="bad.csv",
    )
    with pytest.raises(InputError, match="detection limit"):
        read_campaign_file(bad)
