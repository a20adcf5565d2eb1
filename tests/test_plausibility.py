"""Plausibility ranges: every quantity a reader accepts, hard refusals and soft flags.

The ranges themselves are judgement, each stated with its basis in
`inspection_io.plausibility.RANGES` ("common practice", EN 206 Table 12 strength
classes, EN 1992-1-1 4.4.1 covers, ASTM C876 potentials, EN 10080 / ASTM A615 bar
sizes, all from memory). These tests check that the table covers every number a
reader takes, that the values named in issue 16 are refused or flagged, and that a
flag reaches the per-zone summaries.
"""

import pytest

from inspection_io import plausibility, screening
from inspection_io.errors import InputError
from inspection_io.readers import SPECS, read_campaign_file
from inspection_io.summary import quantity_zone_summary

SITE = {"binder_content": 350.0, "concrete_density": 2400.0}
#: number columns checked in the builder rather than by the column (derived or site-converted)
CHECKED_IN_BUILDER = {("cores", "strength"): "core_strength", ("chloride", "chloride"): "chloride"}


def test_every_number_column_of_every_reader_has_a_range():
    for kind, spec in SPECS.items():
        for column in spec.all_columns():
            if column.parse != "number":
                continue
            key = column.plausible or CHECKED_IN_BUILDER.get((kind, column.name))
            assert key in plausibility.RANGES, (kind, column.name)


def test_ranges_are_consistent_and_sourced():
    for spec in plausibility.RANGES.values():
        (hard_low, hard_high), (soft_low, soft_high) = spec.hard, spec.soft
        assert hard_low <= soft_low < soft_high <= hard_high, spec.quantity
        assert spec.source.strip() and spec.unit
        assert screening.FLAG_REASONS[spec.flag] == spec.reason()


def write(tmp_path, text, name="file.csv"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


CORE_HEAD = "zone,core_id,diameter [{d}],length [mm],strength [MPa]\n"

# (case, csv text, row, raw column header, words in the message); issue 16's examples
REFUSED = [
    ("core 900 MPa", CORE_HEAD.format(d="mm") + "Z1,C1,100,200,900\n", 2, "strength [MPa]",
     "1 to 250 MPa"),
    ("core 1e6 MPa", CORE_HEAD.format(d="mm") + "Z1,C1,100,200,1e6\n", 2, "strength [MPa]",
     "outside the plausible range"),
    ("core 1e-9 MPa", CORE_HEAD.format(d="mm") + "Z1,C1,100,200,1e-9\n", 2, "strength [MPa]",
     "1 to 250 MPa"),
    ("core 1e308 MPa", CORE_HEAD.format(d="mm") + "Z1,C1,100,200,1e308\n", 2, "strength [MPa]",
     "1 to 250 MPa"),
    ("core 400 MPa", CORE_HEAD.format(d="mm") + "Z1,C1,100,200,30\nZ1,C2,100,200,400\n", 3,
     "strength [MPa]", "400 MPa"),
    ("diameter 1e308 in", CORE_HEAD.format(d="in") + "Z1,C1,1e308,200,30\n", 2, "diameter [in]",
     "overflows"),
    ("diameter 40 in", CORE_HEAD.format(d="in") + "Z1,C1,40,200,30\n", 2, "diameter [in]",
     "40 in (= 1016 mm)"),
    ("core from a 1e9 kN load", ("zone,core_id,diameter [mm],length [mm],failure_load [kN]\n"
     "Z1,C1,100,200,1e9\n"), 2, "failure_load [kN]", "failure load"),
    ("cover 5000 mm", "zone,location_id,cover [mm]\nZ1,P1,5000\n", 2, "cover [mm]",
     "0 to 300 mm"),
    ("chloride 150 % binder", ("zone,profile_id,depth_from [mm],depth_to [mm],chloride [% binder]\n"
     "Z1,P1,0,10,150\n"), 2, "chloride [% binder]", "more than 100 %"),
    ("chloride 12 % concrete = 82 % binder",
     "zone,profile_id,depth_from [mm],depth_to [mm],chloride [% concrete]\nZ1,P1,0,10,12\n", 2,
     "chloride [% concrete]", "12 % concrete (= 82.2857 % binder)"),
    ("chloride increment at 5 m", ("zone,profile_id,depth_from [mm],depth_to [mm],chloride "
     "[% binder]\nZ1,P1,5000,5010,0.5\n"), 2, "depth_from [mm]", "0 to 300 mm"),
    ("carbonation 5 m", "zone,location_id,carbonation_depth [cm]\nZ1,P1,500\n", 2,
     "carbonation_depth [cm]", "500 cm (= 5000 mm)"),
    ("half-cell +5000 mV", "zone,location_id,potential [mV CSE]\nZ1,P1,5000\n", 2,
     "potential [mV CSE]", "-1500 to 500 mV CSE"),
    ("half-cell -1e6 mV", "zone,location_id,potential [mV CSE]\nZ1,P1,-1e6\n", 2,
     "potential [mV CSE]", "-1500 to 500 mV CSE"),
    ("half-cell -5 V SCE", "zone,location_id,potential [V SCE]\nZ1,P1,-5\n", 2,
     "potential [V SCE]", "-5 V SCE (= -5075 mV CSE)"),
    ("200 mm bar at a break-out", ("zone,breakout_id,bar_diameter [mm],residual_diameter [mm]\n"
     "Z1,B1,200,190\n"), 2, "bar_diameter [mm]", "3 to 60 mm"),
    ("200 mm tensile specimen", ("zone,specimen_id,diameter [mm],yield_strength [MPa]\n"
     "Z1,T1,200,500\n"), 2, "diameter [mm]", "bar diameter"),
    ("yield 5000 MPa", "zone,specimen_id,diameter [mm],yield_strength [MPa]\nZ1,T1,16,5000\n", 2,
     "yield_strength [MPa]", "150 to 1000 MPa"),
    ("tensile 90 ksi is fine, 900 ksi is not",
     ("zone,specimen_id,diameter [mm],yield_strength [ksi],tensile_strength [ksi]\n"
     "Z1,T1,16,60,90\nZ1,T2,16,60,900\n"), 3, "tensile_strength [ksi]", "900 ksi"),
]


@pytest.mark.parametrize("case, text, row, column, words", REFUSED, ids=[c[0] for c in REFUSED])
def test_implausible_values_are_refused_with_file_row_column_and_range(tmp_path, case, text, row,
                                                                       column, words):
    path = write(tmp_path, text)
    with pytest.raises(InputError) as info:
        read_campaign_file(path, **SITE)
    err = info.value
    assert (err.file, err.row, err.column) == (str(path), row, column)
    assert words in err.message


FLAGGED = [
    # (case, text, flagged item, flag, quantities carrying the flag)
    ("core 130 MPa", CORE_HEAD.format(d="mm") + "Z1,C1,100,200,130\nZ1,C2,100,200,35\n", "C1",
     "unusual core strength", {"core_strength", "insitu_strength"}),
    ("core of 22 mm", CORE_HEAD.format(d="mm") + "Z1,C1,22,44,30\nZ1,C2,100,200,35\n", "C1",
     "unusual core diameter", {"core_strength", "insitu_strength"}),
    ("cover 150 mm", "zone,location_id,cover [mm]\nZ1,P1,150\nZ1,P2,30\n", "P1", "unusual cover",
     {"cover"}),
    ("chloride 8 % binder", ("zone,profile_id,depth_from [mm],depth_to [mm],chloride [% binder]\n"
     "Z1,P1,0,10,8\nZ1,P2,0,10,1\n"), "P1", "unusual chloride content", {"chloride"}),
    ("carbonation 95 mm", "zone,location_id,carbonation_depth [mm]\nZ1,P1,95\nZ1,P2,10\n", "P1",
     "unusual carbonation depth", {"carbonation_depth"}),
    ("half-cell -1000 mV", "zone,location_id,potential [mV CSE]\nZ1,P1,-1000\nZ1,P2,-200\n", "P1",
     "unusual half-cell potential", {"potential"}),
    ("elongation 0.5 % flags only the elongation",
     ("zone,specimen_id,diameter [mm],yield_strength [MPa],elongation [%]\nZ1,T1,16,500,0.5\n"
     "Z1,T2,16,500,14\n"), "T1", "unusual elongation", {"elongation"}),
    ("yield 200 MPa", ("zone,specimen_id,diameter [mm],yield_strength [MPa]\nZ1,T1,16,200\n"
     "Z1,T2,16,500\n"), "T1", "unusual yield strength", {"yield_strength"}),
]


@pytest.mark.parametrize("case, text, item, flag, quantities", FLAGGED,
                         ids=[c[0] for c in FLAGGED])
def test_unusual_values_are_kept_and_flagged(tmp_path, case, text, item, flag, quantities):
    obs = read_campaign_file(write(tmp_path, text), **SITE).observations
    mine = obs[obs.item_id == item]
    flagged = {q for q, f in zip(mine["quantity"], mine["flags"]) if flag in f.split(";")}
    assert flagged == quantities
    others = obs[obs.item_id != item]
    assert not any(flag in f for f in others["flags"])
    assert flag in screening.FLAG_REASONS


def test_a_plausibility_flag_reaches_the_zone_summary(tmp_path):
    path = write(tmp_path, "zone,location_id,cover [mm]\nZ1,P1,150\nZ1,P2,30\nZ1,P3,40\n")
    obs = read_campaign_file(path).observations
    summary = quantity_zone_summary(obs, "cover").iloc[0]
    assert (summary.n_total, summary.n_flagged, summary.n_excluded, summary.n) == (3, 1, 1, 2)
    assert summary["mean"] == pytest.approx(35.0)          # (30 + 40) / 2
    included = quantity_zone_summary(obs, "cover", include_flagged={"unusual cover"}).iloc[0]
    assert included.n == 3 and included["max"] == 150.0


DEPTHS = {"S1": 200.0}
MEMBERS = {"S1": "Z1", "S2": "Z1"}


@pytest.mark.parametrize("text, column, words", [
    ("zone,member,location_id,cover [mm]\nZ1,S1,P1,30\nZ1,S1,P2,200\n", "cover [mm]",
     "not smaller than the depth of member 'S1' (200 mm"),
    ("zone,member,location_id,carbonation_depth [mm]\nZ1,S1,P1,201\n",
     "carbonation_depth [mm]", "larger than the depth"),
    (("zone,member,profile_id,depth_from [mm],depth_to [mm],chloride [% binder]\n"
     "Z1,S1,P1,190,210,0.2\n"), "depth_to [mm]", "larger than the depth"),
])
def test_depths_beyond_the_member_are_refused(tmp_path, text, column, words):
    path = write(tmp_path, text)
    with pytest.raises(InputError) as info:
        read_campaign_file(path, known_members=MEMBERS, member_depths=DEPTHS)
    assert info.value.column == column and words in info.value.message


def test_member_depth_check_needs_the_member_and_its_depth(tmp_path):
    path = write(tmp_path, "zone,member,location_id,cover [mm]\nZ1,S2,P1,250\nZ1,,P2,250\n")
    assert len(read_campaign_file(path, known_members=MEMBERS, member_depths=DEPTHS)
               .observations) == 2
    assert plausibility.within_member_depth(199.0, 200.0)
    assert not plausibility.within_member_depth(200.0, 200.0)
    assert plausibility.within_member_depth(200.0, 200.0, allow_equal=True)
    assert plausibility.within_member_depth(5000.0, None)
