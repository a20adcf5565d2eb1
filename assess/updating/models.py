"""PyMC models for updating normally distributed site quantities.

One builder serves concrete (on ln f_c), steel yield, cover and residual bar
area: a normal population per group (zone) with unknown mean and standard
deviation, with three pooling choices:

- ``"none"``: every group has its own mean and precision, each with the
  normal-gamma prior (with one group this is the conjugate model of the JCSS
  Probabilistic Model Code, Part 3.0 Annex A, and the posterior is known in
  closed form);
- ``"partial"``: a hierarchical model (Gelman et al. 2013, *Bayesian Data
  Analysis*, 3rd ed., ch. 5): shared precision, site mean with the
  normal-gamma prior, zone means scattered around it with spread tau, written
  non-centred so a zone with two cores borrows strength from the others;
- ``"complete"``: one population for all groups.

``prior=None`` uses the reference (Jeffreys) prior p(mu, sigma) ~ 1/sigma,
whose predictive is the classical Student-t result behind EN 1990 Annex D
("V unknown").
"""

from __future__ import annotations

import os

import numpy as np

from assess.errors import AnalysisError, InputError
from assess.priors.normal_gamma import NormalGamma

POOLING = ("none", "partial", "complete")


def hierarchical_normal_model(values, group_index, groups, prior: NormalGamma | None, *,
                              pooling: str = "partial", tau_scale: float = 0.1,
                              name: str | None = None, measurement_sd: float = 0.0):
    """Build the PyMC model (not sampled).

    Parameters
    ----------
    values : array_like (n,)
        Observations of Y [units of Y, e.g. ln MPa for concrete].
    group_index : array_like of int (n,)
        Index into `groups` of each observation [-].
    groups : sequence of str
        Group (zone) names.
    prior : NormalGamma or None
        Prior of (mu, sigma); None for the reference prior (pooling "none" or
        "complete" only).
    pooling : {"none", "partial", "complete"}
    tau_scale : float
        Scale of the half-normal prior on the between-group spread of the mean
        [units of Y]; 0.1 on ln f_c allows about 10 % between zones.
    name : str, optional
        Build a named sub-model (variables ``<name>::mu`` ...) inside the model
        whose context is open; the enclosing model must define the ``group``
        coordinate. Several quantities then compile and sample as one model.
    measurement_sd : float, default 0
        Standard deviation of the error of one reading [units of Y]
        (`assess.updating.measurement_error`): a reading is the true local
        value plus this error, y ~ N(mu, sqrt(sigma^2 + measurement_sd^2)), so
        ``sigma`` is the spread of the true values, without the error.

    Returns
    -------
    pymc.Model with variables ``mu`` (dims group), ``sigma`` (dims group for
    pooling "none", scalar otherwise) and, for "partial", ``mu_site`` and ``tau``.
    """
    import pymc as pm

    if pooling not in POOLING:
        raise InputError(f"pooling must be one of {POOLING}, got {pooling!r}")
    y = np.asarray(values, dtype=float)
    idx = np.asarray(group_index, dtype=int)
    groups = [str(g) for g in groups]
    if y.ndim != 1 or idx.shape != y.shape:
        raise InputError("values and group_index must be 1-D arrays of the same length")
    if prior is None and pooling == "partial":
        raise InputError("partial pooling needs a proper prior")
    error = float(measurement_sd)
    if not (np.isfinite(error) and error >= 0):
        raise InputError(f"measurement_sd must be finite and >= 0, got {measurement_sd!r}",
                         column="measurement_sd")
    model_kwargs = {"name": name} if name else {"coords": {"group": groups}}
    with pm.Model(**model_kwargs) as model:
        if pooling == "none":
            mu, sigma = _group_parameters(pm, prior, dims="group", shape=len(groups))
            pm.Normal("y", mu=mu[idx], sigma=with_error(pm, sigma[idx], error), observed=y)
        elif pooling == "complete":
            mu0, sigma = _group_parameters(pm, prior, name_suffix="_all")
            mu = pm.Deterministic("mu", mu0 * np.ones(len(groups)), dims="group")
            pm.Deterministic("sigma", sigma)
            pm.Normal("y", mu=mu0, sigma=with_error(pm, sigma, error), observed=y)
        else:
            precision = pm.Gamma("precision", alpha=prior.shape, beta=prior.rate)
            sigma = pm.Deterministic("sigma", 1.0 / pm.math.sqrt(precision))
            z_site = pm.Normal("z_site", mu=prior.z_mean, sigma=prior.z_std)
            mu_site = pm.Deterministic("mu_site", prior.center + z_site * sigma)
            tau = pm.HalfNormal("tau", sigma=tau_scale)
            z = pm.Normal("z", mu=0.0, sigma=1.0, dims="group")
            mu = pm.Deterministic("mu", mu_site + tau * z, dims="group")
            pm.Normal("y", mu=mu[idx], sigma=with_error(pm, sigma, error), observed=y)
    return model


def with_error(pm, sigma, measurement_sd: float):
    """sqrt(sigma^2 + measurement_sd^2): spread of readings of true values with error sd."""
    if measurement_sd == 0.0:
        return sigma
    return pm.math.sqrt(sigma**2 + measurement_sd**2)


def _group_parameters(pm, prior, *, dims=None, shape=None, name_suffix=""):
    """Mean and standard deviation with a normal-gamma or reference prior."""
    names = ("mu", "sigma") if not name_suffix else ("mu" + name_suffix, "sigma" + name_suffix)
    kwargs = {"dims": dims} if dims else {}
    size = {"shape": shape} if (shape and not dims) else {}
    if prior is None:
        mu = pm.Flat(names[0], **kwargs, **size)
        log_sigma = pm.Flat("log_" + names[1], **kwargs, **size)
        sigma = pm.Deterministic(names[1], pm.math.exp(log_sigma), **kwargs)
        return mu, sigma
    precision = pm.Gamma("precision" + name_suffix, alpha=prior.shape, beta=prior.rate, **kwargs, **size)
    sigma = pm.Deterministic(names[1], 1.0 / pm.math.sqrt(precision), **kwargs)
    z = pm.Normal("zloc" + name_suffix, mu=prior.z_mean, sigma=prior.z_std, **kwargs, **size)
    mu = pm.Deterministic(names[0], prior.center + z * sigma, **kwargs)
    return mu, sigma


CORES_VARIABLE = "ASSESS_MCMC_CORES"
"""Environment variable: worker processes for the chains (default: one per chain, at most one
per CPU). ``1`` samples the chains one after another in this process, which on a small
machine is faster for small models: each worker process pays for importing PyMC and
receiving the compiled model (measured in benchmarks/update_demo.py). The draws do not
depend on it: every chain has its own seed."""


def chain_processes(chains: int) -> int:
    """Worker processes for ``chains`` chains (`CORES_VARIABLE`, else min(chains, CPUs))."""
    text = os.environ.get(CORES_VARIABLE, "").strip()
    if text:
        if not (text.isascii() and text.isdigit() and int(text) >= 1):
            raise InputError(f"{CORES_VARIABLE} must be a whole number >= 1, got {text!r}",
                             column=CORES_VARIABLE)
        return min(int(text), chains)
    return max(1, min(chains, os.cpu_count() or 1))


def sample_posterior(model, *, draws: int = 1000, tune: int = 1000, chains: int = 4,
                     seed: int | None = None, target_accept: float = 0.95,
                     sampler: str = "pymc", progressbar: bool = False):
    """Run NUTS on ``model`` and return an ``arviz.InferenceData``.

    Parameters
    ----------
    draws, tune, chains : int
        Draws kept per chain, tuning steps per chain, number of chains [-].
    seed : int
        Pass an int for reproducible output across calls.
    target_accept : float
        NUTS step-size adaptation target [-]; 0.95 keeps the hierarchical
        models free of divergences.
    sampler : {"pymc", "nutpie"}
        PyMC's own NUTS or nutpie's (if installed).
    """
    import logging

    import pymc as pm

    cores = chain_processes(chains)
    logger = logging.getLogger("pymc")
    previous = logger.level
    if not progressbar:  # PyMC logs its progress at INFO level
        logger.setLevel(logging.WARNING)
    try:
        return _sample(pm, model, draws, tune, chains, cores, seed, target_accept, sampler,
                       progressbar)
    except Exception as exc:
        failure = _sampler_failure(exc)
        if failure is None:
            raise
        raise failure from exc
    finally:
        logger.setLevel(previous)


def _sampler_failure(exc: Exception) -> AnalysisError | None:
    """An `AnalysisError` for a sampler run lost to its surroundings rather than to the
    model: a chain's worker process died, or PyTensor's compile lock was held too long by
    another process (a busy shared machine); None for any other exception."""
    from filelock import Timeout
    from pymc.sampling.parallel import ParallelSamplingError

    fix = (f"run again; on a busy machine set {CORES_VARIABLE}=1 (chains one after another "
           "in this process)")
    if isinstance(exc, Timeout):
        return AnalysisError("the MCMC model could not be compiled: PyTensor's compile lock "
                             f"was held by another process too long ({exc}); {fix}", fix=fix)
    if isinstance(exc, ParallelSamplingError):
        return AnalysisError(f"an MCMC chain's worker process failed ({exc}); {fix}", fix=fix)
    return None


def _sample(pm, model, draws, tune, chains, cores, seed, target_accept, sampler, progressbar):
    with model:
        if sampler == "nutpie":
            return pm.sample(draws=draws, tune=tune, chains=chains, cores=cores, random_seed=seed,
                             nuts_sampler="nutpie", progressbar=progressbar,
                             target_accept=target_accept)
        if sampler != "pymc":
            raise InputError(f"sampler must be 'pymc' or 'nutpie', got {sampler!r}")
        from assess.updating.workers import dying_context

        return pm.sample(draws=draws, tune=tune, chains=chains, cores=cores, random_seed=seed,
                         target_accept=target_accept, progressbar=progressbar,
                         compute_convergence_checks=False,
                         mp_ctx=dying_context() if cores > 1 else None)


def group_draws(idata, group: str, name: str | None = None):
    """Flattened posterior draws of (mu, sigma) for one group.

    Parameters
    ----------
    name : str, optional
        Sub-model name used when building (variables ``<name>::mu``).

    Returns
    -------
    mu, sigma : ndarray (chains * draws,) [units of Y]
    """
    post = idata.posterior
    prefix = f"{name}::" if name else ""
    mu = post[prefix + "mu"].sel(group=group)
    sigma = post[prefix + "sigma"]
    if "group" in sigma.dims:
        sigma = sigma.sel(group=group)
    return mu.values.ravel(), np.broadcast_to(sigma.values, mu.shape).ravel()


def free_parameter_names(model) -> list[str]:
    """Names of the variables the convergence gate should check.

    The free variables plus every ``mu`` and ``sigma`` (also inside sub-models),
    which are what the reliability analysis uses.
    """
    names = [v.name for v in model.free_RVs]
    for var in model.named_vars:
        if var.split("::")[-1] in ("mu", "sigma") and var not in names:
            names.append(var)
    return names
