"""Exposure classes as independent blocks of one deterioration model.

References
- Independent blocks: when no parameter is shared and no reading depends on two blocks,
  the joint log density is the sum of the blocks' log densities, so the joint posterior
  is the product of the blocks' posteriors (Gelman et al. 2013, Bayesian Data Analysis,
  3rd ed., ch. 5, from memory). Checked exactly, at random points, against the models
  built one class at a time (the site's former one-model-per-class fits).
"""

import numpy as np
import pytest

from assess.errors import InputError
from assess.updating.carbonation import CarbonationPriors, carbonation_model
from assess.updating.chloride import ChloridePriors, chloride_model
from assess.updating.classes import ClassBlocks, split_posterior

ZONES = ["A", "B", "C"]
CLASS_OF_ZONE = ["deck", "soffit", "deck"]


def _readings(seed, n_per_zone=6):
    # synthetic inputs (not a reference): readings of three zones at two ages
    rng = np.random.default_rng(seed)
    zone = np.repeat(np.arange(3), n_per_zone)
    age = np.where(np.arange(zone.size) % 2 == 0, 12.0, 25.0)
    depth = rng.uniform(2.0, 40.0, zone.size)
    value = rng.uniform(0.05, 2.0, zone.size)
    return depth, age, value, zone


def _separate(build, zone, k_zones, *arrays):
    keep = np.isin(zone, k_zones)
    index = np.searchsorted(k_zones, zone[keep])
    return build(*(a[keep] for a in arrays), index, [ZONES[z] for z in k_zones])


def _logp_pairs(joint, parts, seeds):
    """(joint logp, sum of the parts' logp) at random points of the joint's value space."""
    import pytensor

    with pytensor.config.change_flags(mode="FAST_COMPILE"):  # Python thunks: no C compiles
        return _logp_pairs_compiled(joint, parts, seeds)


def _logp_pairs_compiled(joint, parts, seeds):
    rv_of_value = {joint.rvs_to_values[rv].name: rv.name for rv in joint.free_RVs}
    start = joint.initial_point()
    joint_logp = joint.compile_logp()
    part_logp = [(model.compile_logp(), model.initial_point(), model, k_zones)
                 for model, k_zones in parts]
    pairs = []
    for seed in seeds:
        rng = np.random.default_rng(seed)
        point = {name: rng.normal(0.0, 0.5, value.shape) for name, value in start.items()}
        total = 0.0
        for k, (logp, k_start, model, k_zones) in enumerate(part_logp):
            sub = {}
            for name in k_start:
                value = point[name]
                dims = joint.named_vars_to_dims.get(rv_of_value[name], ())
                for axis, dim in enumerate(dims):
                    value = np.take(value, list(k_zones) if dim == "zone" else [k], axis=axis)
                sub[name] = value.reshape(k_start[name].shape)
            total += float(logp(sub))
        pairs.append((float(joint_logp(point)), total))
    return pairs


def test_chloride_blocks_sum_to_the_classes_models():
    depth, age, value, zone = _readings(1)
    priors = {"deck": ChloridePriors.from_site("exposed deck"),
              "soffit": ChloridePriors.from_site("sheltered soffit", mean_annual_temperature_c=5.0)}
    joint = chloride_model(depth, age, value, zone, ZONES, priors=priors,
                           zone_class=CLASS_OF_ZONE)
    parts = []
    for name, k_zones in (("deck", [0, 2]), ("soffit", [1])):
        model = _separate(lambda d, t, c, i, z, p=priors[name]: chloride_model(d, t, c, i, z, priors=p),
                          zone, np.array(k_zones), depth, age, value)
        parts.append((model, k_zones))
    for a, b in _logp_pairs(joint, parts, (2, 3)):
        assert a == pytest.approx(b, rel=1e-9, abs=1e-8)


def test_carbonation_blocks_sum_to_the_classes_models():
    depth, age, _, zone = _readings(4)
    depth[::5] = 0.0  # left-censored readings in both classes
    priors = {"deck": CarbonationPriors.from_exposure("exposed deck"),
              "soffit": CarbonationPriors.from_exposure("sheltered soffit")}
    joint = carbonation_model(depth, age, zone, ZONES, priors=priors, zone_class=CLASS_OF_ZONE)
    parts = []
    for name, k_zones in (("deck", [0, 2]), ("soffit", [1])):
        model = _separate(lambda d, t, i, z, p=priors[name]: carbonation_model(d, t, i, z, priors=p),
                          zone, np.array(k_zones), depth, age)
        parts.append((model, k_zones))
    for a, b in _logp_pairs(joint, parts, (5, 6)):
        assert a == pytest.approx(b, rel=1e-9, abs=1e-8)


def test_split_posterior_names_and_shapes_as_one_class_model():
    import arviz as az

    rng = np.random.default_rng(0)
    posterior = {"rate": rng.normal(size=(2, 5, 3)), "scatter": rng.normal(size=(2, 5, 2))}
    idata = az.from_dict(posterior=posterior, coords={"zone": ZONES, "exposure": ["deck", "soffit"]},
                         dims={"rate": ["zone"], "scatter": ["exposure"]})
    part = split_posterior(idata, 1, ["B"])
    assert part.posterior["scatter"].dims == ("chain", "draw")
    np.testing.assert_array_equal(part.posterior["scatter"].values, posterior["scatter"][:, :, 1])
    np.testing.assert_array_equal(part.posterior["rate"].sel(zone="B").values,
                                  posterior["rate"][:, :, 1])
    assert list(part.posterior["zone"].values) == ["B"]


def test_class_without_readings_or_zone_without_class_is_refused():
    priors = {"deck": CarbonationPriors.from_exposure("exposed deck"),
              "soffit": CarbonationPriors.from_exposure("sheltered soffit")}
    with pytest.raises(InputError, match="no readings"):
        ClassBlocks.build(priors, ["deck", "deck"], ["A", "B"], [0, 1], CarbonationPriors, "t")
    with pytest.raises(InputError, match="zone_class"):
        ClassBlocks.build(priors, ["deck", "dry"], ["A", "B"], [0, 1], CarbonationPriors, "t")


def _quadrature_mean(x, t, priors):
    """Posterior mean of k of one zone by quadrature (scipy lognormal prior, normal readings)."""
    from scipy import integrate, stats

    k = np.linspace(1e-4, 15.0, 30001)
    log_post = (stats.lognorm(s=priors.rate_log_sd, scale=priors.rate_median).logpdf(k)
                + stats.norm.logpdf(x, k[:, None] * np.sqrt(t), priors.measurement_sd_mm).sum(1))
    w = np.exp(log_post - log_post.max())
    return integrate.simpson(k * w, x=k) / integrate.simpson(w, x=k)


def test_site_fits_every_class_of_a_kind_with_one_model(monkeypatch):
    """One sampled (so compiled) model for two classes; each class's posterior is its own."""
    import arviz as az

    from assess.site.initiation import _kind_fit
    from assess.site.settings import FitSettings, RunSettings
    from assess.updating.carbonation import CarbonationFit, fit_carbonation

    monkeypatch.setenv("ASSESS_MCMC_CORES", "1")  # a tiny model: chains in this process
    calls = []

    def counting(*args, **kwargs):
        calls.append(kwargs.get("zone_class"))
        return fit_carbonation(*args, **kwargs)

    # synthetic readings (not a reference): k = 3, 5, 2 mm/sqrt(yr), known scatter 2 mm
    rng = np.random.default_rng(7)
    zone = np.repeat(np.array(["A", "B", "C"]), 8)
    age = np.tile([10.0, 20.0, 30.0, 40.0], 6)
    rate = np.select([zone == "A", zone == "B"], [3.0, 5.0], 2.0)
    depth = np.maximum(rate * np.sqrt(age) + 2.0 * rng.standard_normal(zone.size), 0.5)
    priors = {"exposed deck": CarbonationPriors.from_exposure("exposed deck", measurement_sd_mm=2.0),
              "sheltered soffit": CarbonationPriors.from_exposure("sheltered soffit",
                                                                  measurement_sd_mm=2.0)}
    groups = {"exposed deck": ["A", "C"], "sheltered soffit": ["B"]}
    # a three-parameter model: short chains reach the gate's ESS 400 (checked by the gate)
    settings = RunSettings(fits={"carbonation": FitSettings(draws=500, tune=300)})
    fits = _kind_fit(None, "carbonation", {"depth_mm": depth, "age_years": age, "zone": zone},
                     groups, priors, settings, counting, CarbonationFit,
                     ("depth_mm", "age_years"), ("carbonation_rate",), "carbonation rates")
    assert calls == [["exposed deck", "exposed deck", "sheltered soffit"]]  # one model
    assert fits["A"] is fits["C"] and fits["A"] is not fits["B"]
    for name, exposure in (("A", "exposed deck"), ("B", "sheltered soffit"), ("C", "exposed deck")):
        fit = fits[name]
        assert fit.zones == tuple(groups[exposure]) and fit.priors is priors[exposure]
        k = fit.idata.posterior["carbonation_rate"].sel(zone=name)
        mcse = float(k.std()) / np.sqrt(float(az.ess(k.to_dataset(name="k"))["k"]))
        exact = _quadrature_mean(depth[zone == name], age[zone == name], priors[exposure])
        assert abs(float(k.mean()) - exact) < 4.0 * mcse, (name, float(k.mean()), exact, mcse)
