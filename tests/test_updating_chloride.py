"""Chloride-profile updating: forward model, prior, posterior recovery and the gate.

References
- fib Bulletin 34 (2006), Annex B: error-function chloride model with ageing,
  C(x, t) = C0 + (C_S - C0) erfc(x / (2 sqrt(D_app(t) t))), D_app = D_ref (t_ref/t)^a,
  D_RCM,0 table and Beta priors of a (from memory).
- scipy.special.erfc (through assess.deterioration.chloride.chloride_content) as the
  independent numeric reference of the pytensor expression; scipy.stats densities for
  the model's log-density.
"""

import math

import numpy as np
import pytest
from scipy import special, stats

from assess.deterioration.chloride import chloride_content, temperature_factor
from assess.deterioration.defaults import AGEING_EXPONENT, M2_PER_S_TO_MM2_PER_YEAR
from assess.errors import InputError
from assess.updating.chloride import (
    ChloridePriors,
    chloride_content_tensor,
    chloride_model,
    fit_chloride,
)
from assess.updating.gate import require_convergence

PRIORS = ChloridePriors.from_site("exposed deck", "CEM I", 0.50)

# Synthetic test input, not a reference: profiles generated INSIDE the test from the
# forward model with known parameters and 10 % multiplicative noise (fixed seed), at three
# ages as three inspection campaigns would give them.
TRUE = {"surface_chloride": {"A": 2.5, "B": 1.5},
        "diffusion_ref": {"A": 400.0, "B": 250.0},    # [mm2/yr] at t_ref = 28 d
        "ageing_exponent": 0.35, "initial_chloride": 0.05, "noise": 0.10}
AGES = (8.0, 20.0, 40.0)
DEPTHS = np.arange(2.5, 60.0, 5.0)


def synthetic_profiles(seed=3):
    rng = np.random.default_rng(seed)
    depth, age, value, zone = [], [], [], []
    for z, name in enumerate(("A", "B")):
        for t in AGES:
            c = chloride_content(DEPTHS, t, TRUE["surface_chloride"][name],
                                 TRUE["diffusion_ref"][name], PRIORS.age_ref_years,
                                 TRUE["ageing_exponent"], TRUE["initial_chloride"])
            depth.append(DEPTHS)
            age.append(np.full(DEPTHS.size, t))
            value.append(c * np.exp(TRUE["noise"] * rng.standard_normal(DEPTHS.size)))
            zone.append(np.full(DEPTHS.size, z))
    return (np.concatenate(depth), np.concatenate(age), np.concatenate(value),
            np.concatenate(zone))


@pytest.fixture(scope="module")
def fitted():
    depth, age, value, zone = synthetic_profiles()
    return fit_chloride(depth, age, value, zone, ["A", "B"], priors=PRIORS, seed=20,
                        draws=500, tune=1000)


def test_tensor_forward_model_equals_numpy_erfc_solution():
    # Reference: chloride_content (numpy, scipy.special.erfc), "average" convention.
    rng = np.random.default_rng(0)
    n = 200
    args = dict(depth_mm=rng.uniform(0.0, 80.0, n), age_years=rng.uniform(0.5, 60.0, n),
                surface_chloride=rng.uniform(0.3, 5.0, n),
                d_ref_mm2_per_year=rng.uniform(20.0, 900.0, n),
                age_ref_years=rng.uniform(0.05, 30.0, n),
                ageing_exponent=rng.uniform(0.0, 0.9, n),
                initial_chloride=rng.uniform(0.0, 0.2, n), delta_x_mm=rng.uniform(0.0, 15.0, n))
    expected = chloride_content(args["depth_mm"], args["age_years"], args["surface_chloride"],
                                args["d_ref_mm2_per_year"], args["age_ref_years"],
                                args["ageing_exponent"], args["initial_chloride"],
                                args["delta_x_mm"], diffusion_convention="average")
    got = chloride_content_tensor(**args).eval()
    assert np.any(args["depth_mm"] <= args["delta_x_mm"])  # both branches exercised
    np.testing.assert_allclose(got, expected, rtol=1e-10, atol=1e-14)


def test_default_prior_uses_fib34_table_converted_to_mm2_per_year():
    # fib 34 Annex B D_RCM,0 for CEM I at w/c 0.50: 15.8e-12 m2/s (from memory);
    # 1 m2/s = 1e6 mm2 x 3.15576e7 s/yr.
    assert PRIORS.diffusion_ref_median == pytest.approx(15.8e-12 * 1e6 * 365.25 * 86400)
    assert PRIORS.ageing_exponent is AGEING_EXPONENT["CEM I"]
    at_10c = ChloridePriors.from_site("exposed deck", "CEM I", 0.45,
                                      mean_annual_temperature_c=10.0)
    k_e = float(temperature_factor(4800.0, 283.15))  # fib 34: b_e = 4800 K, T_ref = 293 K
    assert at_10c.diffusion_ref_median == pytest.approx(10.0e-12 * M2_PER_S_TO_MM2_PER_YEAR * k_e)
    with pytest.raises(InputError, match="water_cement_ratio"):
        ChloridePriors.from_site("exposed deck", "CEM I", 0.70)
    with pytest.raises(InputError, match="diffusion_ref_median"):
        ChloridePriors.from_site("exposed deck", "fly ash", 0.50)


def test_model_log_density_matches_scipy_at_a_point():
    depth, age, value, zone = synthetic_profiles()
    model = chloride_model(depth, age, value, zone, ["A", "B"], priors=PRIORS)
    logp = model.compile_logp(jacobian=False)
    a, log_cs = 0.4, np.array([0.7, 0.2])
    log_d_ref, log_c0, sd = np.array([6.1, 5.4]), math.log(0.04), 0.15
    age_data = math.exp(np.mean(np.log(age)))  # the module's documented data age
    log_d_data = log_d_ref + a * math.log(PRIORS.age_ref_years / age_data)
    point = {"ageing_exponent_logodds__": special.logit(a), "log_surface_chloride": log_cs,
             "log_diffusion_data_age": log_d_data, "log_initial_chloride": log_c0,
             "measurement_sd_log__": math.log(sd)}
    beta = AGEING_EXPONENT["CEM I"].to_scipy()
    predicted = chloride_content(depth, age, np.exp(log_cs)[zone], np.exp(log_d_ref)[zone],
                                 PRIORS.age_ref_years, a, math.exp(log_c0))
    # Priors as specified: ln C_S, ln D_ref (independent of a), ln C0 normal; a Beta;
    # sigma half-normal; likelihood normal on ln C.
    expected = (beta.logpdf(a)
                + stats.norm.logpdf(log_cs, math.log(PRIORS.surface_chloride_median),
                                    PRIORS.surface_chloride_log_sd).sum()
                + stats.norm.logpdf(log_d_ref, math.log(PRIORS.diffusion_ref_median),
                                    PRIORS.diffusion_log_sd).sum()
                + stats.norm.logpdf(log_c0, math.log(PRIORS.initial_chloride_median),
                                    PRIORS.initial_chloride_log_sd)
                + stats.halfnorm.logpdf(sd, scale=PRIORS.measurement_sd_scale)
                + stats.norm.logpdf(np.log(value), np.log(predicted), sd).sum())
    assert float(logp(point)) == pytest.approx(expected, rel=1e-9)


@pytest.mark.slow
def test_posterior_intervals_cover_true_parameters(fitted):
    # 94 % equal-tailed posterior intervals (the ArviZ default probability).
    for zone in ("A", "B"):
        draws = fitted.zone_draws(zone)
        for key, true in (("surface_chloride", TRUE["surface_chloride"][zone]),
                          ("diffusion_ref_mm2_per_year", TRUE["diffusion_ref"][zone]),
                          ("ageing_exponent", TRUE["ageing_exponent"])):
            low, high = np.quantile(draws[key], [0.03, 0.97])
            assert low < true < high, (zone, key, low, high, true)


@pytest.mark.slow
def test_ageing_exponent_learnt_from_three_ages(fitted):
    # The profiles at three ages must shrink a well below its fib 34 prior sd 0.12.
    a = fitted.zone_draws("A")["ageing_exponent"]
    assert a.std() < 0.5 * AGEING_EXPONENT["CEM I"].params["sd"]


@pytest.mark.slow
def test_convergence_gate_passes(fitted):
    assert fitted.gate.passed and fitted.gate.divergences == 0
    report = require_convergence(fitted.idata, ["surface_chloride", "diffusion_ref",
                                                "ageing_exponent", "measurement_sd"],
                                 what="chloride test")
    assert report.max_rhat <= 1.01


@pytest.mark.slow
def test_initiation_times_solve_the_depassivation_condition(fitted):
    # Closed-form inverse check: at t_i the content at the cover equals C_crit.
    t_i = fitted.initiation_time_draws("A", cover_mm=30.0, critical_chloride=0.6, seed=1)
    draws = fitted.zone_draws("A")
    finite = np.isfinite(t_i) & (t_i > 0)
    assert finite.mean() > 0.9
    c = chloride_content(30.0, t_i[finite], draws["surface_chloride"][finite],
                         draws["diffusion_ref_mm2_per_year"][finite], draws["age_ref_years"],
                         draws["ageing_exponent"][finite], draws["initial_chloride"][finite])
    np.testing.assert_allclose(c, 0.6, rtol=1e-8)


def test_bad_observations_are_rejected_with_the_column_named():
    depth, age, value, zone = synthetic_profiles()
    value = value.copy()
    value[4] = 0.0
    with pytest.raises(InputError, match="'chloride'.*Position 4"):
        chloride_model(depth, age, value, zone, ["A", "B"], priors=PRIORS)
    with pytest.raises(InputError, match="zone_index"):
        chloride_model(depth, age, np.abs(value) + 0.1, zone + 1, ["A", "B"], priors=PRIORS)
