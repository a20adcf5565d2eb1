"""Site file (site.toml) and campaign.toml: loading, checking, and every error's key path."""

import datetime as dt
import math
import re
from pathlib import Path

import pytest

from inspection_io.errors import InputError
from inspection_io.site import load_campaign, load_site

DOCS = Path(__file__).resolve().parents[1] / "docs" / "data-formats.md"
TEMPLATES = Path(__file__).resolve().parents[1] / "inspection_io" / "templates"

# Invented site used only by these tests.
GOOD = """\
[site]
name = "Test deck"
year_built = 1974
assessment_date = 2026-11-30
structure = "multi-storey car park"

[target]
consequence_class = "CC2"
reference_period = 1
cost_of_safety = "normal"

[materials]
concrete_class = "C30/37"
production = "ready-mixed"
steel_grade = "B500"
cement_type = "CEM I"
binder_content = 350
concrete_density = 2400
water_cement_ratio = 0.50

[loads]
superimposed_dead = 1.5
imposed_category = "F"
imposed_characteristic = 2.5
concrete_unit_weight = 25.0

[zones.L1]
description = "Level 1 deck"
exposure = "exposed deck"
mean_annual_temperature = 10.0

[zones.L2]
description = "Level 2 soffit"
exposure = "sheltered soffit"

[members.S1-03]
zone = "L1"
kind = "one-way slab"
span = 5.4
depth = 200
width = 1000
cover = 30
bar_diameter = 12
bar_spacing = 150
shear_reinforcement = false
tension_face = "bottom"

[members.B2-01]
zone = "L2"
kind = "beam"
span = 7.5
depth = 600
width = 300
cover = 35
bar_diameter = 25
steel_area = 1473

[members.C2-04]
zone = "L2"
kind = "flat-slab column connection"
depth = 250
cover = 30
bar_diameter = 16
bar_spacing = 125
tension_face = "top"
column_size = [400, 400]
position = "interior"
span_x = 7.2
span_y = 7.2
"""


def write(tmp_path, text, name="site.toml"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def replace_line(text, old, new):
    assert old in text, old
    return text.replace(old, new, 1)


def test_good_site_loads_into_frozen_dataclasses(tmp_path):
    site = load_site(write(tmp_path, GOOD))
    assert site.site.name == "Test deck"
    assert site.site.assessment_date == dt.date(2026, 11, 30)
    assert site.zone_ids == ("L1", "L2")
    assert site.member_ids == ("S1-03", "B2-01", "C2-04")
    assert site.zones["L2"].mean_annual_temperature is None
    assert site.materials.f_ck == 30.0 and site.materials.f_yk == 500.0
    slab = site.members["S1-03"]
    assert slab.width == 1000 and slab.steel_area is None
    # A_s = (pi 12^2 / 4) * 1000 / 150 = 753.98 mm2 per metre (geometry)
    assert math.isclose(slab.tension_steel_area, math.pi * 144 / 4 * 1000 / 150)
    assert slab.effective_depth == 200 - 30 - 6
    column = site.members["C2-04"]
    assert column.column_size == (400.0, 400.0) and column.span is None
    assert column.width == 1000 and column.tension_face == "top"
    with pytest.raises(AttributeError):
        slab.depth = 300  # frozen
    with pytest.raises(TypeError):
        site.zones["L3"] = site.zones["L1"]  # read-only mapping


def test_site_folder_is_accepted_in_place_of_the_file(tmp_path):
    write(tmp_path, GOOD)
    assert load_site(tmp_path).site.name == "Test deck"


def test_the_documented_example_site_file_loads(tmp_path):
    block = re.search(r"## Site file `site.toml`.*?```toml\n(.*?)```", DOCS.read_text(),
                      re.S).group(1)
    site = load_site(write(tmp_path, block))
    assert site.member_ids == ("S1-03",)
    assert site.members["S1-03"].bar_spacing == 150


def test_templates_load():
    site = load_site(TEMPLATES / "site.toml")
    assert site.zone_ids and site.member_ids
    campaign = load_campaign(TEMPLATES / "campaign.toml")
    assert isinstance(campaign.date, dt.date)


BROKEN = [
    # (old text, new text, expected key path, words expected in the message)
    ('name = "Test deck"\n', "", "site.name", "missing"),
    ("year_built = 1974", "year_built = 2030", "site.year_built", "1800"),
    ("assessment_date = 2026-11-30", 'assessment_date = "2026-11-30"', "site.assessment_date",
     "TOML date"),
    ('consequence_class = "CC2"', 'consequence_class = "CC4"', "target.consequence_class",
     "CC1"),
    ("reference_period = 1", "reference_period = 0", "target.reference_period", "years"),
    ('cost_of_safety = "normal"', 'cost_of_safety = "average"', "target.cost_of_safety",
     "normal"),
    ('concrete_class = "C30/37"', 'concrete_class = "30"', "materials.concrete_class",
     "EN 206"),
    ('steel_grade = "B500"', 'steel_grade = "Gr60"', "materials.steel_grade", "B500"),
    ('cement_type = "CEM I"', 'cement_type = "CEM II"', "materials.cement_type", "CEM I"),
    ("binder_content = 350", "binder_content = -350", "materials.binder_content", "kg/m3"),
    ("water_cement_ratio = 0.50", "water_cement_ratio = true", "materials.water_cement_ratio",
     "number"),
    ('imposed_category = "F"', 'imposed_category = "H"', "loads.imposed_category", '"G"'),
    ("imposed_characteristic = 2.5", 'imposed_characteristic = "2.5"',
     "loads.imposed_characteristic", "number"),
    ('exposure = "exposed deck"', 'exposure = "outdoor"', "zones.L1.exposure", "exposed deck"),
    ("mean_annual_temperature = 10.0", "mean_annual_temperature = 100.0",
     "zones.L1.mean_annual_temperature", "degC"),
    ("span = 5.4", "span = 5400", "members.S1-03.span", "looks like mm"),
    ("span = 5.4", "span = -5.4", "members.S1-03.span", "[m]"),
    ("span = 5.4\n", "", "members.S1-03.span", "missing"),
    ("depth = 200", "depth = 0.2", "members.S1-03.depth", "mm"),
    ("cover = 30\nbar_diameter = 12", "cover = 200\nbar_diameter = 12",
     "members.S1-03.cover", "smaller than the depth"),
    ("cover = 30\nbar_diameter = 12", "cover = 180\nbar_diameter = 25",
     "members.S1-03.bar_diameter", "smaller than the depth"),
    ('zone = "L1"\nkind = "one-way slab"', 'zone = "L9"\nkind = "one-way slab"',
     "members.S1-03.zone", "unknown zone"),
    ('kind = "one-way slab"', 'kind = "two-way slab"', "members.S1-03.kind", "one-way slab"),
    ("bar_spacing = 150\n", "", "members.S1-03.bar_spacing", "steel_area"),
    ("bar_spacing = 150\n", "bar_spacing = 150\nsteel_area = 754\n",
     "members.S1-03.bar_spacing", "both"),
    ("bar_spacing = 150\n", "bar_spacing = 10\n", "members.S1-03.bar_spacing", "bar diameter"),
    ("shear_reinforcement = false", "shear_reinforcement = 0", "members.S1-03.shear_reinforcement",
     "true or false"),
    ('tension_face = "bottom"', 'tension_face = "side"', "members.S1-03.tension_face", "top"),
    ("width = 300", "", "members.B2-01.width", "missing"),
    ("column_size = [400, 400]\n", "", "members.C2-04.column_size", "missing"),
    ("column_size = [400, 400]", "column_size = [400]", "members.C2-04.column_size", "two"),
    ("column_size = [400, 400]", "column_size = [400, 40]", "members.C2-04.column_size[1]",
     "mm"),
    ('position = "interior"', 'position = "inner"', "members.C2-04.position", "corner"),
    ("span_y = 7.2", "span_y = 0", "members.C2-04.span_y", "[m]"),
    # unknown keys: typos are errors, with a suggestion
    ("span = 5.4", "spam = 5.4", "members.S1-03.spam", "did you mean 'span'"),
    ("cover = 35", "cover = 35\ncolor = 1", "members.B2-01.color", "unknown key"),
    ('structure = "multi-storey car park"', 'structure = "car park"\nowner = "x"',
     "site.owner", "unknown key"),
    ("[loads]", "[load]", "load", "did you mean 'loads'"),
    ('description = "Level 1 deck"', 'description = "Level 1 deck"\nlevel = 1',
     "zones.L1.level", "unknown key"),
    ("[zones.L2]", "[zones.L2.sub]", "zones.L2.sub", "unknown key"),
]


@pytest.mark.parametrize("old, new, key_path, words", BROKEN,
                         ids=[f"{b[2]}:{b[3]}" for b in BROKEN])
def test_broken_site_file_names_file_and_key_path(tmp_path, old, new, key_path, words):
    path = write(tmp_path, replace_line(GOOD, old, new))
    with pytest.raises(InputError) as info:
        load_site(path)
    error = info.value
    assert error.column == key_path
    assert error.file == str(path)
    assert str(path) in str(error) and key_path in str(error)
    assert words in error.message


def test_missing_zone_table_is_named(tmp_path):
    text = GOOD.split("[zones.L1]")[0]
    with pytest.raises(InputError) as info:
        load_site(write(tmp_path, text))
    assert info.value.column == "zones"


def test_member_that_is_not_a_table(tmp_path):
    with pytest.raises(InputError) as info:
        load_site(write(tmp_path, GOOD + "\n[members]\nX1 = 3\n"))
    assert info.value.column == "members.X1"
    assert "table" in info.value.message


def test_malformed_toml_reports_parser_line_and_column(tmp_path):
    text = replace_line(GOOD, "span = 5.4", "span = = 5.4")
    line = text.splitlines().index("span = = 5.4") + 1
    with pytest.raises(InputError) as info:
        load_site(write(tmp_path, text))
    assert info.value.row == line
    assert f"line {line}, column" in info.value.message
    assert "malformed TOML" in info.value.message


def test_missing_and_non_utf8_files(tmp_path):
    with pytest.raises(InputError, match="file not found"):
        load_site(tmp_path / "nowhere.toml")
    path = tmp_path / "site.toml"
    path.write_bytes(GOOD.replace("Test deck", "D\xe9ck").encode("latin-1"))
    with pytest.raises(InputError, match="UTF-8"):
        load_site(path)


def test_campaign_file_good_and_broken(tmp_path):
    good = 'name = "2009 first survey"\ndate = 2009-06-15\ndescription = "Cores"\n'
    info = load_campaign(write(tmp_path, good, "campaign.toml"))
    assert (info.name, info.date, info.description) == ("2009 first survey",
                                                        dt.date(2009, 6, 15), "Cores")
    cases = [
        (good.replace("date = 2009-06-15", 'date = "15/06/2009"'), "date"),
        (good.replace("date = 2009-06-15", "date = 2009-06-15T10:00:00"), "date"),
        (good.replace('name = "2009 first survey"\n', ""), "name"),
        (good + "place = 'deck'\n", "place"),
        (good.replace('"Cores"', "3"), "description"),
    ]
    for text, key in cases:
        path = write(tmp_path, text, "campaign.toml")
        with pytest.raises(InputError) as info:
            load_campaign(path)
        assert info.value.column == key and info.value.file == str(path)
