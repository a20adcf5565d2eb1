"""The invented demo site: reproducible, valid, physically plausible, consistent with its truth.

The demo data are invented (the only invented data in the test suite); the checks compare them
with the published models they were drawn from and with the file contract
(docs/data-formats.md).
"""

from __future__ import annotations

import csv
import importlib.util
import json
import math
from collections import defaultdict
from pathlib import Path

import numpy as np
import openpyxl
import pytest
from scipy import special, stats

from inspection_io.cores import LD_FACTORS, CoreCorrections, insitu_strength
from inspection_io.site import MEMBER_KINDS, load_campaign, load_site

REPO = Path(__file__).resolve().parents[1]
GENERATOR = REPO / "demo_sites" / "generate_demo.py"
SITE = REPO / "demo_sites" / "tanners-yard"
CAMPAIGNS = sorted((SITE / "campaigns").iterdir())
DATA_SUFFIXES = (".csv", ".xlsx")

ZONE_KEYS = {"exposure", "mu_log_fc", "sigma_log_fc", "steel_mean", "steel_sd", "cover_mean",
             "cover_sd", "Cs", "D_ref", "ageing_exponent", "t_ref", "C0", "Ccrit",
             "initiation_time", "i_corr", "pitting_factor", "carbonation_k",
             "pitting_gumbel_location", "pitting_gumbel_scale", "faces"}
MEASUREMENT_KEYS = {"cover_error_sd_mm", "chloride_error_log_sd", "carbonation_local_log_sd",
                    "carbonation_reading_sd_mm", "halfcell_active_mean_mV_CSE",
                    "halfcell_passive_mean_mV_CSE", "halfcell_sd_mV",
                    "section_loss_diameter_error_sd_mm", "pit_depth_error_sd_mm"}
#: ASTM C876 threshold below which corrosion is likely (> 90 %) [mV CSE] (from memory).
ASTM_C876_ACTIVE = -350.0


def _load_generator():
    spec = importlib.util.spec_from_file_location("generate_demo", GENERATOR)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module")
def generator():
    return _load_generator()


@pytest.fixture(scope="module")
def regenerated(generator, tmp_path_factory):
    out = tmp_path_factory.mktemp("demo") / "tanners-yard"
    generator.generate(out, generator.DEFAULT_SEED)
    return out


@pytest.fixture(scope="module")
def truth():
    return json.loads((SITE / "truth.json").read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def site():
    return load_site(SITE)


# --------------------------------------------------------------------------- reading helpers
def _header_name(header: str) -> tuple[str, str | None]:
    name, _, unit = header.partition("[")
    return name.strip().lower(), unit.rstrip("] ").strip() or None


def read_rows(path: Path, kind: str) -> tuple[list[dict], dict]:
    """Rows as {column name: text} and the unit of each column, CSV or XLSX (sheet = kind)."""
    if path.suffix == ".xlsx":
        book = openpyxl.load_workbook(path, read_only=True)
        sheet = book[kind] if kind in book.sheetnames else book.worksheets[0]
        grid = [["" if c is None else str(c) for c in row]
                for row in sheet.iter_rows(values_only=True)]
        book.close()
    else:
        with path.open(newline="", encoding="utf-8") as handle:
            grid = list(csv.reader(handle))
    parsed = [_header_name(h) for h in grid[0]]
    units = {name: unit for name, unit in parsed}
    return [{name: cell for (name, _), cell in zip(parsed, row)} for row in grid[1:]], units


def campaign_files(kind: str) -> list[tuple[float, Path]]:
    """(age [years], path) of every file of `kind`, oldest campaign first."""
    truth = json.loads((SITE / "truth.json").read_text(encoding="utf-8"))
    found = []
    for folder in CAMPAIGNS:
        for name, info in truth["campaigns"][folder.name]["files"].items():
            if info["kind"] == kind:
                found.append((truth["campaigns"][folder.name]["age"], folder / name))
    return sorted(found)


def chloride_binder_percent(value: float, unit: str, site) -> float:
    # docs/data-formats.md: % concrete x concrete_density / binder_content = % binder;
    # % cement is taken equal to % binder (CEM I binder = cement).
    if unit == "% concrete":
        return value * site.materials.concrete_density / site.materials.binder_content
    assert unit in ("% binder", "% cement")
    return value


def potential_cse(value: float, unit: str) -> float:
    # docs/data-formats.md: E_CSE = E_SCE - 75 mV (standard potentials vs SHE, common practice).
    return {"mV CSE": value, "mV SCE": value - 75.0}[unit]


# --------------------------------------------------------------------------- reproducibility
def test_regenerating_gives_the_committed_files(regenerated):
    # decisions.toml (the value-of-information set-up) is written by hand, not generated.
    committed = sorted(p.relative_to(SITE) for p in SITE.rglob("*")
                       if p.is_file() and p.name != "decisions.toml")
    fresh = sorted(p.relative_to(regenerated) for p in regenerated.rglob("*") if p.is_file())
    assert fresh == committed
    for relative in committed:
        old, new = (SITE / relative).read_bytes(), (regenerated / relative).read_bytes()
        if relative.suffix == ".xlsx" and old != new:
            old_book = openpyxl.load_workbook(SITE / relative)
            new_book = openpyxl.load_workbook(regenerated / relative)
            assert old_book.sheetnames == new_book.sheetnames, relative
            for name in old_book.sheetnames:
                assert (list(old_book[name].iter_rows(values_only=True))
                        == list(new_book[name].iter_rows(values_only=True))), (relative, name)
        else:
            assert old == new, f"{relative} differs from a fresh run of generate_demo.py"


def test_another_seed_gives_other_numbers(generator, tmp_path):
    record = generator.generate(tmp_path / "other", seed=generator.DEFAULT_SEED + 1)
    committed = json.loads((SITE / "truth.json").read_text(encoding="utf-8"))
    assert record["zones"]["L3"]["Cs"] != committed["zones"]["L3"]["Cs"]
    assert record["generator"]["seed"] == generator.DEFAULT_SEED + 1


# --------------------------------------------------------------------------- site and campaigns
def test_site_file_is_valid_and_realistic(site):
    assert site.site.year_built == 1974
    assert site.loads.imposed_category == "F"
    assert set(MEMBER_KINDS) == {m.kind for m in site.members.values()}
    assert 8 <= len(site.members) <= 12
    assert len(site.zones) == 4
    assert {z.exposure for z in site.zones.values()} >= {"exposed deck", "internal"}
    for member in site.members.values():
        assert 25 <= member.cover <= 40, member.member_id
        if member.kind == "one-way slab":
            assert 150 <= member.depth <= 250 and 4.0 <= member.span <= 6.0
        elif member.kind == "beam":
            assert member.steel_area is not None and 7.0 <= member.span <= 8.0
        else:
            assert member.tension_face == "top" and member.column_size is not None


def test_three_campaigns_with_mixed_files():
    assert len(CAMPAIGNS) == 3
    years = [load_campaign(folder).date.year for folder in CAMPAIGNS]
    assert len(set(years)) == 3
    xlsx = [p for folder in CAMPAIGNS for p in folder.glob("*.xlsx")]
    assert xlsx and all(len(openpyxl.load_workbook(p, read_only=True).sheetnames) >= 2
                        for p in xlsx)
    for folder in CAMPAIGNS:
        assert len([p for p in folder.iterdir() if p.suffix in DATA_SUFFIXES]) >= 5


def test_truth_has_every_key(truth):
    assert truth["generator"]["seed"] == 20261202 and truth["generator"]["version"]
    assert set(truth["zones"]) == {"L1", "L2", "L3", "L4"}
    for zone_id, zone in truth["zones"].items():
        assert ZONE_KEYS <= set(zone), f"{zone_id} lacks {ZONE_KEYS - set(zone)}"
    assert MEASUREMENT_KEYS <= set(truth["measurement_error"])
    assert {c.name for c in CAMPAIGNS} == set(truth["campaigns"])
    for record in truth["campaigns"].values():
        assert set(record["active_fraction"]) == set(truth["zones"])


def test_truth_initiation_times_satisfy_the_models(truth):
    for zone in truth["zones"].values():
        # carbonation square-root law x = k sqrt(t) (fib Bulletin 34 inspection form)
        t_carbonation = zone["initiation_time_carbonation"]
        assert zone["carbonation_k"] * math.sqrt(t_carbonation) == pytest.approx(
            zone["cover_mean"], rel=1e-3)
        t_chloride = zone["initiation_time_chloride"]
        if t_chloride is not None and t_chloride < 200:
            # Fick's second law, erfc solution with D_app(t) = D_ref (t_ref/t)^a (fib 34 form):
            # the chloride at the mean cover equals Ccrit at the initiation time
            d_app = zone["D_ref"] * (zone["t_ref"] / t_chloride) ** zone["ageing_exponent"]
            c = zone["C0"] + (zone["Cs"] - zone["C0"]) * special.erfc(
                zone["cover_mean"] / (2.0 * math.sqrt(d_app * t_chloride)))
            assert c == pytest.approx(zone["Ccrit"], rel=2e-3)
        assert zone["initiation_time"] == min(t for t in (t_chloride, t_carbonation)
                                              if t is not None)


# --------------------------------------------------------------------------- cores
def test_core_conversion_is_the_one_the_readers_use(generator, truth):
    assert tuple(generator.CORE_LD_FACTORS) == tuple(LD_FACTORS["ASTM C42"])
    # ASTM C42/C42M l/d factors (from memory): 1.75 -> 0.98, 1.50 -> 0.96, 1.25 -> 0.93,
    # 1.00 -> 0.87
    assert truth["core_conversion"]["factor_l_d"] == [0.87, 0.93, 0.96, 0.98, 1.0]


@pytest.mark.parametrize("campaign_index", [0, 1, 2])
def test_correcting_a_generated_core_returns_the_true_insitu_strength(generator, truth,
                                                                      campaign_index):
    # With no scatter (sigma_log_fc = 0) every clean core must correct back to exp(mu_zone)
    # through the readers' own conversion chain (inspection_io.cores), whatever its l/d.
    still = {"site": truth["site"],
             "zones": {z: dict(v, sigma_log_fc=0.0) for z, v in truth["zones"].items()}}
    campaign = generator.CAMPAIGNS[campaign_index]
    options = next(o for _, kind, o in campaign["files"] if kind == "cores")
    header, rows, extra = generator.make_cores(np.random.default_rng(1), still, campaign, options)
    names = [_header_name(h)[0] for h in header]
    checked = 0
    for row in rows:
        cells = dict(zip(names, row))
        if cells["core_id"] in extra["flagged_cores"]:
            continue
        diameter, length = float(cells["diameter"]), float(cells["length"])
        strength = (4000.0 * float(cells["failure_load"]) / (math.pi * diameter ** 2)
                    if "failure_load" in cells else float(cells["strength"]))
        value, _ = insitu_strength(strength, diameter, length, cells.get("moisture")
                                   or "as-received", CoreCorrections())
        expected = math.exp(truth["zones"][cells["zone"]]["mu_log_fc"])
        # rounding: half of 0.1 MPa on strength (0.1 kN on load is 0.013 MPa on a 100 mm core)
        # times the largest correction product 1.06
        assert value == pytest.approx(expected, abs=0.05 * 1.06 + 1e-9), cells["core_id"]
        checked += 1
    assert checked >= 8


def _insitu_cores(truth):
    """Clean (unflagged) cores corrected with inspection_io.cores: {zone: [f_is]}."""
    flagged = truth["core_conversion"]["flagged_cores"]
    corrected = defaultdict(list)
    for _, path in campaign_files("cores"):
        rows, units = read_rows(path, "cores")
        for row in rows:
            if row["core_id"] in flagged:
                continue
            assert units["diameter"] == units["length"] == "mm"
            diameter, length = float(row["diameter"]), float(row["length"])
            assert 1.0 <= length / diameter <= 2.0
            if "failure_load" in row:
                assert units["failure_load"] == "kN"
                strength = 4000.0 * float(row["failure_load"]) / (math.pi * diameter ** 2)
            else:
                assert units["strength"] in ("MPa", "N/mm2")
                strength = float(row["strength"])
            value, _ = insitu_strength(strength, diameter, length,
                                       row.get("moisture") or "as-received", CoreCorrections())
            corrected[row["zone"]].append(value)
    return corrected


def test_core_strength_scatter_is_plausible(truth):
    corrected = _insitu_cores(truth)
    pooled = np.concatenate([np.asarray(v) for v in corrected.values()])
    cov = pooled.std(ddof=1) / pooled.mean()
    # concrete in-situ CoV 0.10-0.15 typical (JCSS PMC 3.1 priors s' 0.09-0.14, common practice)
    assert 0.08 <= cov <= 0.20


def test_corrected_cores_recover_the_zone_log_means(truth):
    corrected = _insitu_cores(truth)
    for zone_id, values in corrected.items():
        zone = truth["zones"][zone_id]
        logs = np.log(values)
        # mean of n lognormal log-values ~ N(mu, sigma^2/n): 3 standard errors
        tolerance = 3.0 * zone["sigma_log_fc"] / math.sqrt(len(logs))
        assert abs(logs.mean() - zone["mu_log_fc"]) < tolerance, zone_id
    residuals = np.concatenate([np.log(v) - truth["zones"][z]["mu_log_fc"]
                                for z, v in corrected.items()])
    sigma = truth["site"]["sigma_log_fc"]
    assert abs(residuals.mean()) < 3.0 * sigma / math.sqrt(len(residuals))
    # sample log-std against its chi-square 99.7 % band (normal theory)
    n = len(residuals)
    low, high = stats.chi2.ppf([0.0015, 0.9985], n - 1)
    assert low / (n - 1) < residuals.var(ddof=1) / sigma ** 2 < high / (n - 1)


def test_flagged_cores_are_flagged_in_their_files(truth):
    flagged = truth["core_conversion"]["flagged_cores"]
    assert set(flagged.values()) == {"bar_in_core", "damaged"}
    seen = {}
    for _, path in campaign_files("cores"):
        rows, _ = read_rows(path, "cores")
        for row in rows:
            for column in ("bar_in_core", "damaged"):
                if row.get(column) == "yes":
                    seen[row["core_id"]] = column
    assert seen == flagged


# --------------------------------------------------------------------------- deterioration
def _chloride_by_zone(path: Path, site, min_depth: float = 0.0, max_depth: float = 1e9):
    rows, units = read_rows(path, "chloride")
    by_zone = defaultdict(list)
    for row in rows:
        if min_depth <= float(row["depth_from"]) < max_depth:
            by_zone[row["zone"]].append(
                chloride_binder_percent(float(row["chloride"]), units["chloride"], site))
    return {zone: float(np.mean(v)) for zone, v in by_zone.items()}


def test_chloride_rises_with_time_in_exposed_zones(site):
    exposed = [z for z, spec in site.zones.items() if spec.exposure == "exposed deck"]
    deep = [_chloride_by_zone(path, site, min_depth=20.0) for _, path in campaign_files("chloride")]
    for zone_id in exposed:
        series = [campaign[zone_id] for campaign in deep]
        assert all(a < b for a, b in zip(series, series[1:])), (zone_id, series)


def test_exposed_decks_carry_far_more_chloride_than_the_internal_zone(site):
    internal = [z for z, spec in site.zones.items() if spec.exposure == "internal"]
    exposed = [z for z, spec in site.zones.items() if spec.exposure == "exposed deck"]
    for _, path in campaign_files("chloride"):
        surface = _chloride_by_zone(path, site, max_depth=10.0)
        assert min(surface[z] for z in exposed) > 3.0 * max(surface[z] for z in internal)


def test_section_loss_grows_between_campaigns():
    pit, area_loss = defaultdict(list), defaultdict(list)
    for _, path in campaign_files("section_loss"):
        rows, _ = read_rows(path, "section_loss")
        by_zone = defaultdict(list)
        for row in rows:
            d0 = float(row["bar_diameter"])
            by_zone[row["zone"]].append((float(row["max_pit_depth"]),
                                         1.0 - (float(row["residual_diameter"]) / d0) ** 2))
        for zone_id, values in by_zone.items():
            pit[zone_id].append(np.mean([v[0] for v in values]))
            area_loss[zone_id].append(np.mean([v[1] for v in values]))
    repeated = [z for z in pit if len(pit[z]) >= 2]
    assert len(repeated) >= 2
    for zone_id in repeated:
        assert all(a < b for a, b in zip(pit[zone_id], pit[zone_id][1:])), zone_id
        assert all(a < b for a, b in zip(area_loss[zone_id], area_loss[zone_id][1:])), zone_id


def test_halfcell_active_share_matches_truth_and_grows(truth):
    m = truth["measurement_error"]
    sd = m["halfcell_sd_mV"]
    # probability that a reading lies below the ASTM C876 threshold for each state
    p_active = stats.norm.cdf(ASTM_C876_ACTIVE, m["halfcell_active_mean_mV_CSE"], sd)
    p_passive = stats.norm.cdf(ASTM_C876_ACTIVE, m["halfcell_passive_mean_mV_CSE"], sd)
    pooled = []
    for _, path in campaign_files("halfcell"):
        rows, units = read_rows(path, "halfcell")
        record = truth["campaigns"][path.parent.name]
        below = defaultdict(list)
        for row in rows:
            below[row["zone"]].append(
                potential_cse(float(row["potential"]), units["potential"]) < ASTM_C876_ACTIVE)
        for zone_id, flags in below.items():
            f = record["active_fraction"][zone_id]
            expected = f * p_active + (1.0 - f) * p_passive
            # binomial share: 3 standard errors (plus one reading of slack for tiny shares)
            tolerance = 3.0 * math.sqrt(expected * (1.0 - expected) / len(flags)) + 1 / len(flags)
            assert abs(np.mean(flags) - expected) < tolerance, (path.parent.name, zone_id)
        pooled.append(np.mean([flag for z in ("L2", "L3", "L4") for flag in below[z]]))
    assert all(a < b for a, b in zip(pooled, pooled[1:])), pooled


def test_cover_and_carbonation_surveys_match_truth(truth):
    for _, path in campaign_files("cover"):
        rows, _ = read_rows(path, "cover")
        by_face = defaultdict(list)
        for row in rows:
            by_face[row["zone"], row["face"]].append(float(row["cover"]))
        assert {face for _, face in by_face} == {"top", "bottom"}
        for (zone_id, face), values in by_face.items():
            population = truth["zones"][zone_id]["faces"][face]
            spread = math.hypot(population["cover_sd"],
                                truth["measurement_error"]["cover_error_sd_mm"])
            assert abs(np.mean(values) - population["cover_mean"]) < \
                3.0 * spread / math.sqrt(len(values)), (path.parent.name, zone_id, face)
    for age, path in campaign_files("carbonation"):
        rows, _ = read_rows(path, "carbonation")
        by_zone = defaultdict(list)
        for row in rows:
            by_zone[row["zone"]].append(float(row["carbonation_depth"]))
        for zone_id, values in by_zone.items():
            zone = truth["zones"][zone_id]
            s = truth["measurement_error"]["carbonation_local_log_sd"]
            mean = zone["carbonation_k"] * math.sqrt(age) * math.exp(s * s / 2.0)
            spread = math.hypot(mean * s, truth["measurement_error"]["carbonation_reading_sd_mm"],
                                0.5)   # + rounding to whole mm
            assert abs(np.mean(values) - mean) < 3.0 * spread / math.sqrt(len(values)), zone_id


# --------------------------------------------------------------------------- readers
def test_every_demo_file_reads_without_error(site):
    from inspection_io.readers import read_campaign_file

    members = {member_id: m.zone for member_id, m in site.members.items()}
    for folder in CAMPAIGNS:
        for path in sorted(p for p in folder.iterdir() if p.suffix in DATA_SUFFIXES):
            result = read_campaign_file(path, binder_content=site.materials.binder_content,
                                        concrete_density=site.materials.concrete_density,
                                        known_zones=list(site.zones), known_members=members)
            assert len(result.observations) > 0, path


# --------------------------------------------------------------------------- design, faces, pits
def _design_check():
    spec = importlib.util.spec_from_file_location("demo_design_check",
                                                  REPO / "demo_sites" / "design_check.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_design_check_formulas_against_hand_figures():
    check = _design_check()
    # CP 110:1972 3.3.5.3 (from memory), by hand: T12 at 125 mm (904.8 mm2/m), b = 1000,
    # d = 169 mm, f_cu = 37, f_y = 410: z = 169 (1 - 1.1 x 410 x 904.8 / (37 x 1000 x 169))
    # = 157.97 mm <= 0.95 d; M_u = 0.87 x 410 x 904.8 x 157.97 = 50.98 kNm
    assert check.flexural_resistance(904.8, 1000.0, 169.0) == pytest.approx(50.98, abs=0.02)
    # lever arm capped at 0.95 d for little steel: 0.87 x 410 x 100 x 0.95 x 169 = 5.727 kNm
    assert check.flexural_resistance(100.0, 1000.0, 169.0) == pytest.approx(5.727, abs=0.002)
    # concrete limit 0.15 f_cu b d^2 = 0.15 x 37 x 300 x 500^2 = 416.25 kNm
    assert check.flexural_resistance(6000.0, 300.0, 500.0) == pytest.approx(416.25)
    # BS 8110-1:1997 Table 3.8, grade 25 (from memory): 100 As/bd = 0.15 gives 0.45 N/mm2 at
    # d = 125 mm and 0.34 N/mm2 at d >= 400 mm (values rounded to 0.01 in the table)
    assert check.concrete_shear_stress(0.15 * 125.0 * 10, 1000.0, 125.0, 25.0) == \
        pytest.approx(0.45, abs=0.005)
    assert check.concrete_shear_stress(0.15 * 500.0 * 10, 1000.0, 500.0, 25.0) == \
        pytest.approx(0.34, abs=0.005)
    # elastic support moments of equal spans under a UDL on all spans, in w L^2 (standard
    # beam tables, e.g. Hicks, Civil Engineering Formulas, Table 2.1, from memory):
    # 2 spans -1/8; 3 spans -0.100; 4 spans -0.1071, -0.0714, -0.1071
    assert check.elastic_support_moments(2) == pytest.approx([-0.125])
    assert check.elastic_support_moments(3) == pytest.approx([-0.100, -0.100])
    assert check.elastic_support_moments(4) == pytest.approx([-3 / 28, -2 / 28, -3 / 28])
    # CP 110:1972 Table 1 partial factors on loads (from memory): w = 1.4 g_k + 1.6 q_k
    slab = {"kind": "one-way slab", "depth": 200, "width": 1000}
    loads = {"concrete_unit_weight": 25.0, "superimposed_dead": 1.2,
             "imposed_characteristic": 2.5}
    assert check.design_load(slab, loads) == pytest.approx(1.4 * 6.2 + 1.6 * 2.5)


def test_every_demo_member_meets_the_code_of_its_time(truth, site, generator):
    design = truth["design"]["utilisation"]
    assert set(design) == set(site.members)
    # the committed truth is the check of the committed members (nothing stale)
    fresh = _design_check().check_all(generator.MEMBERS, generator.SITE_TABLES["loads"],
                                      generator.LINKS)
    assert fresh == design
    for member_id, modes in design.items():
        member = site.members[member_id]
        expected = ({"punching"} if member.kind == "flat-slab column connection" else
                    {"flexure sagging", "shear with links" if member.shear_reinforcement
                     else "shear"} | ({"flexure hogging"} if member.continuous else set()))
        assert set(modes) == expected, member_id
        utilisations = [row["utilisation"] for row in modes.values()]
        assert max(utilisations) <= 1.0, (member_id, modes)
        # designed, not over-designed: the governing mode uses 65-95 % of the resistance
        assert 0.65 <= max(utilisations) <= 0.95, (member_id, modes)


def test_several_slabs_and_beams_are_continuous_with_top_bars(site):
    continuous = [m for m in site.members.values() if m.continuous]
    assert {m.kind for m in continuous} == {"one-way slab", "beam"}
    assert len(continuous) >= 4 and {m.span_position for m in continuous} == {"end", "interior"}
    for m in continuous:
        assert m.span_count >= 3 and m.top_cover is not None and m.top_bar_diameter
        assert (m.top_bar_spacing if m.kind == "one-way slab" else m.top_steel_area)
        assert m.top_cover >= m.cover  # deck-top cover at least the soffit cover
    assert any(not m.continuous for m in site.members.values() if m.kind != CONNECTION)


CONNECTION = "flat-slab column connection"


def test_readings_state_their_face(truth):
    faces = defaultdict(set)
    for kind in ("cover", "carbonation", "chloride", "halfcell", "section_loss"):
        for _, path in campaign_files(kind):
            rows, _ = read_rows(path, kind)
            assert all(row["face"] in ("top", "bottom") for row in rows), path
            faces[kind] |= {(row["zone"], row["face"]) for row in rows}
    # deck-top chloride and carbonation on the exposed decks, some soffit samples elsewhere
    for kind in ("chloride", "carbonation"):
        assert {("L3", "top"), ("L4", "top"), ("L1", "bottom"), ("L2", "bottom")} <= faces[kind]
    assert {f for _, f in faces["cover"]} == {"top", "bottom"}
    assert {f for _, f in faces["halfcell"]} == {"top"}
    # truth.json counts the rows of each face
    for folder, record in truth["campaigns"].items():
        for name, info in record["files"].items():
            if "faces" in info:
                assert sum(sum(z.values()) for z in info["faces"].values()) <= info["rows"]


def test_breakouts_open_the_top_bars_of_continuous_members_with_pits(site):
    rows_seen = 0
    for _, path in campaign_files("section_loss"):
        rows, _ = read_rows(path, "section_loss")
        for row in rows:
            member = site.members[row["member"]]
            if row["face"] == "top":
                assert member.continuous or member.kind == CONNECTION
                expected = member.top_bar_diameter if member.continuous else member.bar_diameter
            else:  # a zone without top bars (L1): the bottom bars of a slab
                assert member.kind == "one-way slab" and not member.continuous
                expected = member.bar_diameter
            assert float(row["bar_diameter"]) == expected
            uniform = (float(row["bar_diameter"]) - float(row["residual_diameter"])) / 2.0
            if row["zone"] in ("L3", "L4"):
                rows_seen += 1
                # the deepest pit exceeds the uniform loss (pitting factor R >= 1), within
                # the readings' errors (0.1 mm on pit and diameter, 0.05 mm rounding)
                assert float(row["max_pit_depth"]) > uniform - 0.3, row
    assert rows_seen >= 16


def test_gumbel_pitting_factor_has_the_truth_mean(generator, truth):
    # Gumbel (EV-I) mean = location + 0.5772 scale (Abramowitz & Stegun 6.1.3; scipy gumbel_r)
    for zone in truth["zones"].values():
        mean = stats.gumbel_r(zone["pitting_gumbel_location"], zone["pitting_gumbel_scale"]).mean()
        assert mean == pytest.approx(zone["pitting_factor"], abs=1e-3)
    zone = truth["zones"]["L3"]
    draws = generator.gumbel_pitting_factor(zone, np.random.default_rng(3), 100_000)
    reference = stats.gumbel_r(zone["pitting_gumbel_location"], zone["pitting_gumbel_scale"])
    # standard error of a mean of 1e5 draws: scale x pi / sqrt(6) / sqrt(1e5); 4 of them
    sd = zone["pitting_gumbel_scale"] * math.pi / math.sqrt(6.0)
    assert abs(draws.mean() - reference.mean()) < 4.0 * sd / math.sqrt(draws.size)
    assert stats.kstest(draws, reference.cdf).pvalue > 0.001
