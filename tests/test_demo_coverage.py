"""Do the demo site's posteriors cover the values that generated its data? Counted as a whole.

Outside reference: the parameters that generated the invented demo data
(demo_sites/tanners-yard/truth.json). This is a self-consistency check of the
updating chain (readers, unit conversion, core corrections, priors, MCMC), not a
check against a published source; the published checks of each model are in
its own test module.

One credible interval per (quantity, zone) is computed from the stored
posteriors of the session (seed from ASSESS_TEST_SEED). No single interval is
asserted: a calibrated model misses each with probability 1 - level, so the
number of misses of k intervals is (nearly) binomial(k, 1 - level). The assert
is on that count, at the binomial 99.9 % point (scipy.stats.binom), so that a
correct model fails this test in about 1 run in 1000 on any machine and seed,
while a systematic error (wrong unit, wrong conversion, a broken sampler) that
shifts several posteriors is caught.

The checks are not all independent (the steel mean is one pooled population;
zones of one exposure class share the chloride ageing exponent), which makes
misses cluster; the bound is then somewhat generous, never strict.

Levels: 95 % for the materials (identified by many cores and readings), 99 %
for the deterioration parameters (each identified by a few profiles or
break-outs at three ages; the 0.5 % quantile of >= 400 effective draws carries
a Monte Carlo error of about 0.35 % in probability, so 99 % is as far as the
tails can be read). Levels and bound were fixed before looking at the misses.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from scipy import stats

from assess.deterioration.defaults import REFERENCE_AGE_YEARS
from assess.updating.models import group_draws

ALPHA = 0.001
"""Probability that a calibrated model exceeds the allowed number of misses."""
T_REF_TRUTH = 10.0  # [yr], truth.json "t_ref" of D_ref


def interval(draws, level):
    tail = (1.0 - level) / 2.0
    low, high = np.quantile(np.asarray(draws, dtype=float), [tail, 1.0 - tail])
    return float(low), float(high)


def allowed_misses(k: int, level: float) -> int:
    """Largest number of misses a calibrated model exceeds with probability < ALPHA."""
    return int(stats.binom.ppf(1.0 - ALPHA, k, 1.0 - level))


def pooled_cover_truth(record: dict) -> dict:
    """zone -> mean cover of the readings the materials fit pools [mm].

    The demo surveys the deck top and the soffit (truth.json ``faces``); the materials
    fit pools a zone's readings of every face into one normal population, whose
    generating mean is the reading-weighted mean of the faces' true means.
    """
    counts = {z: {} for z in record["zones"]}
    for campaign in record["campaigns"].values():
        for info in campaign["files"].values():
            if info["kind"] == "cover":
                for zone, faces in info["faces"].items():
                    for face, n in faces.items():
                        counts[zone][face] = counts[zone].get(face, 0) + n
    return {z: sum(n * record["zones"][z]["faces"][f]["cover_mean"] for f, n in c.items())
            / sum(c.values()) for z, c in counts.items()}


@pytest.fixture(scope="module")
def truth(demo_site):
    record = json.loads((demo_site / "truth.json").read_text())
    pooled = pooled_cover_truth(record)
    return {z: dict(v, cover_pooled=pooled[z]) for z, v in record["zones"].items()}


@pytest.fixture(scope="module")
def deterioration(demo_update, quick_settings):
    from assess.site.corrosion import update_corrosion
    from assess.site.initiation import update_initiation

    site, _ = demo_update
    initiation = update_initiation(site, settings=quick_settings)
    corrosion = update_corrosion(site, settings=quick_settings)
    return initiation, corrosion


def materials_checks(site, update, truth, level=0.95):
    checks = []
    for name, key in (("concrete", "mu_log_fc"), ("cover", "cover_pooled")):
        for zone in site.zones:
            mu, sigma = group_draws(update.idata, zone, name=name)
            if name == "cover":  # population on ln c; truth gives the mean cover [mm]
                mu = np.exp(mu + 0.5 * sigma**2)
            checks.append((f"{name} {zone}", *interval(mu, level), truth[zone][key]))
    mu, _ = group_draws(update.idata, next(iter(site.zones)), name="steel")  # pooled
    checks.append(("steel (pooled)", *interval(mu, level), truth[next(iter(site.zones))]["steel_mean"]))
    return checks


def deterioration_checks(initiation, corrosion, truth, level=0.99):
    checks = []
    for zone in ("L3", "L4"):  # the zones where chloride governs (truth.json)
        draws = initiation.chloride[zone].zone_draws(zone)
        a = draws["ageing_exponent"]
        values = {"Cs": draws["surface_chloride"],
                  # truth gives D at t_ref = 10 yr; the fit's D_ref is at the fib 34 t0 = 28 d
                  "D_ref": draws["diffusion_ref_mm2_per_year"] * (REFERENCE_AGE_YEARS
                                                                  / T_REF_TRUTH) ** a,
                  "ageing_exponent": a}
        for name, value in values.items():
            checks.append((f"chloride {name} {zone}", *interval(value, level), truth[zone][name]))
    for zone in ("L1", "L2", "L3", "L4"):
        draws = corrosion.zone_draws(zone)
        # truth's initiation time is at the zone's mean cover, the model's the zone median of
        # the local times (3-4 % earlier for a cover CoV of 0.2)
        checks.append((f"t_i {zone}", *interval(draws["initiation_time"], level),
                       truth[zone]["initiation_time"]))
        checks.append((f"i_corr {zone}", *interval(draws["corrosion_rate"], level),
                       truth[zone]["i_corr"]))
    return checks


def misses_of(checks):
    return [c for c in checks if not c[1] <= c[3] <= c[2]]


def describe(misses):
    return "; ".join(f"{n}: [{lo:.4g}, {hi:.4g}] misses {v:.4g}" for n, lo, hi, v in misses)


def test_materials_posteriors_cover_the_generating_values(demo_update, truth):
    site, update = demo_update
    checks = materials_checks(site, update, truth)
    misses = misses_of(checks)
    bound = allowed_misses(len(checks), 0.95)
    assert len(misses) <= bound, f"{len(misses)} of {len(checks)} miss (at most {bound}): " \
                                 + describe(misses)
    # informative, not merely wide: narrower than the prior's 95 % range of the site mean in
    # the normal approximation, 2 x 1.96 s'/sqrt(n'), s' = 0.105 and n' = 3 (JCSS PMC Part 3.1,
    # ready-mixed C30 between the C25 and C35 rows)
    widths = [hi - lo for n, lo, hi, _ in checks if n.startswith("concrete")]
    assert max(widths) < 2 * 1.96 * 0.105 / np.sqrt(3.0)


def test_deterioration_posteriors_cover_the_generating_values(deterioration, truth):
    initiation, corrosion = deterioration
    checks = deterioration_checks(initiation, corrosion, truth)
    misses = misses_of(checks)
    bound = allowed_misses(len(checks), 0.99)
    assert len(misses) <= bound, f"{len(misses)} of {len(checks)} miss (at most {bound}): " \
                                 + describe(misses)


def test_the_bound_would_catch_a_systematic_shift(demo_update, deterioration, truth):
    # The check can fail: the same intervals against generating values moved by 15 %
    # (a unit or conversion error of that size) miss far more often than the bound allows.
    site, update = demo_update
    initiation, corrosion = deterioration
    shifted = {z: {k: (v * 1.15 if isinstance(v, float) else v) for k, v in t.items()}
               for z, t in truth.items()}
    checks = (misses_of(materials_checks(site, update, shifted))
              + misses_of(deterioration_checks(initiation, corrosion, shifted)))
    assert len(checks) > allowed_misses(9, 0.95) + allowed_misses(14, 0.99)


def test_the_binomial_bound_matches_scipy():
    # scipy.stats.binom as the reference: P(X > bound) < ALPHA <= P(X >= bound)
    for k, level in ((9, 0.95), (14, 0.99)):
        bound = allowed_misses(k, level)
        assert stats.binom.sf(bound, k, 1 - level) < ALPHA <= stats.binom.sf(bound - 1, k, 1 - level)
