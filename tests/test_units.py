"""Unit conversions of campaign-file columns (inspection_io.units)."""

import pytest

from inspection_io import units

# NIST SP 811 (2008), Appendix B.8/B.9 conversion factors (from memory):
# inch -> m 2.54E-02 (exact), pound-force -> N 4.448222E+00, psi -> Pa 6.894757E+03.
NIST_INCH_M = 2.54e-2
NIST_LBF_N = 4.448222
NIST_PSI_PA = 6.894757e3


def test_inch_to_mm_is_exactly_25_4():
    unit = units.lookup_unit("in", "length")
    assert units.to_canonical(4.0, unit) == pytest.approx(4.0 * NIST_INCH_M * 1000.0, rel=1e-12)


def test_cm_to_mm():
    assert units.to_canonical(3.2, units.lookup_unit("cm", "length")) == pytest.approx(32.0)


@pytest.mark.parametrize("text, factor_pa", [("psi", NIST_PSI_PA), ("ksi", 1000.0 * NIST_PSI_PA)])
def test_psi_and_ksi_to_mpa_match_nist(text, factor_pa):
    value = units.to_canonical(1000.0, units.lookup_unit(text, "stress"))
    assert value == pytest.approx(1000.0 * factor_pa / 1e6, rel=1e-6)


def test_lbf_to_kn_matches_nist():
    value = units.to_canonical(1000.0, units.lookup_unit("lbf", "force"))
    assert value == pytest.approx(NIST_LBF_N, rel=1e-6)


@pytest.mark.parametrize("text", ["MPa", "mpa", " N/mm2 ", "N/mm²", "N / mm^2"])
def test_stress_spellings_are_canonical(text):
    assert units.to_canonical(30.0, units.lookup_unit(text, "stress")) == 30.0


# Standard potentials vs SHE at 25 degC given in docs/data-formats.md (common practice):
# CSE +316 mV, SCE +241 mV, Ag/AgCl (sat. KCl) +197 mV.
@pytest.mark.parametrize("text, reading, she_of_electrode", [
    ("mV SCE", -200.0, 241.0),
    ("mV vs SCE", -200.0, 241.0),
    ("V SCE", -0.200, 241.0),
    ("mV Ag/AgCl", -81.0, 197.0),
    ("V Ag/AgCl", -0.081, 197.0),
    ("mV CSE", -350.0, 316.0),
    ("mV Cu/CuSO4", -350.0, 316.0),
])
def test_half_cell_potentials_convert_to_cse(text, reading, she_of_electrode):
    unit = units.lookup_unit(text, "potential")
    reading_mv = reading * (1000.0 if text.startswith("V") else 1.0)
    expected = reading_mv + she_of_electrode - 316.0
    assert units.to_canonical(reading, unit) == pytest.approx(expected, abs=1e-9)


def test_sce_and_agcl_offsets_are_the_contract_values():
    # docs/data-formats.md: E_CSE = E_SCE - 75 mV; E_CSE = E_Ag/AgCl - 119 mV.
    assert units.electrode_offset_to_cse("SCE") == -75.0
    assert units.electrode_offset_to_cse("Ag/AgCl") == -119.0


def test_potential_without_electrode_is_refused_with_the_accepted_list():
    with pytest.raises(units.UnitError, match="reference electrode.*mV CSE.*mV SCE.*mV Ag/AgCl"):
        units.lookup_unit("mV", "potential")


def test_unsupported_electrode_is_refused():
    with pytest.raises(units.UnitError, match="unsupported reference electrode 'SHE'"):
        units.lookup_unit("mV SHE", "potential")


def test_unknown_unit_lists_accepted_units():
    with pytest.raises(units.UnitError, match="unknown unit 'ft'; accepted: mm, cm, in"):
        units.lookup_unit("ft", "length")


@pytest.mark.parametrize("text", ["% binder", "%binder", "% by mass of binder"])
def test_chloride_binder_spellings(text):
    assert units.lookup_unit(text, "chloride").label == "% binder"


def test_chloride_by_concrete_to_binder():
    # 0.30 % of 2400 kg/m3 concrete is 7.2 kg/m3 of chloride; over 350 kg/m3 binder: 2.057 %.
    chloride_kg = 0.30 / 100.0 * 2400.0
    expected = chloride_kg / 350.0 * 100.0
    assert units.chloride_concrete_to_binder(0.30, 2400.0, 350.0) == pytest.approx(expected)
    assert units.lookup_unit("% concrete", "chloride").needs_binder
