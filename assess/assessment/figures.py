"""Figures of the site assessment (built on `assess.report.plots`)."""

from __future__ import annotations

import numpy as np

from assess.assessment.knowledge import QUANTITIES
from assess.report.plots import plot_beta_before_after, plot_prior_posterior

LABELS = {
    "concrete": ("In-situ concrete compressive strength", "MPa"),
    "steel": ("Reinforcement yield strength", "MPa"),
    "cover": ("Concrete cover", "mm"),
    "area_ratio": ("Residual bar area ratio", "-"),
}


def predictive_draws(population, log: bool, n: int = 4000, seed: int = 0) -> np.ndarray:
    """Draws of the physical value from a population's Student-t predictive [units]."""
    rng = np.random.default_rng(seed)
    precision = rng.gamma(population.shape, 1.0 / population.rate, n)
    sigma = 1.0 / np.sqrt(precision)
    z = rng.normal(population.z_mean, population.z_std, n)
    y = population.center + z * sigma + sigma * rng.standard_normal(n)
    return np.exp(y) if log else y


def prior_posterior_figures(update) -> dict:
    """One figure per (quantity, zone) that has data: design prior vs posterior predictive."""
    figures = {}
    for name, spec in QUANTITIES.items():
        frame = update.data.get(name)
        if frame is None or frame.empty:
            continue
        quantity, unit = LABELS[name]
        for zone, group in frame.groupby("zone"):
            fig = plot_prior_posterior(
                predictive_draws(update.before[zone][name], spec.log),
                predictive_draws(update.after[zone][name], spec.log),
                quantity=f"{quantity}, zone {zone}", unit=unit,
                observations=group["value"].to_numpy(),
                prior_label="Design information", posterior_label="After site tests")
            figures[(name, zone)] = fig
    return figures


def before_after_figure(assessment):
    """Beta before and after per member and mode against the target."""
    rows = [r for r in assessment.results]
    return plot_beta_before_after([r.member for r in rows], [r.before.beta for r in rows],
                                  [r.after.beta for r in rows], assessment.target.beta,
                                  modes=[r.mode for r in rows])
