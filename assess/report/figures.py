"""Figures of the site assessment (built on `assess.report.plots`)."""

from __future__ import annotations

import numpy as np

from assess.report.plots import (
    plot_beta_before_after,
    plot_beta_over_time,
    plot_preposterior_beta,
    plot_prior_posterior,
    plot_risk_drivers,
)
from assess.site.knowledge import LABELS, QUANTITIES, predictive_draws


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
    rows = [r for r in assessment.results]  # every member and mode
    return plot_beta_before_after([r.member for r in rows], [r.before.beta for r in rows],
                                  [r.after.beta for r in rows], assessment.target.beta,
                                  modes=[r.mode for r in rows])


def _finite(values):
    """+/-inf (no failed sample in a draw) left out of a drawn band."""
    values = np.asarray(values, dtype=float)
    return np.where(np.isfinite(values), values, np.nan)


def life_figure(life):
    """beta(t) of each member's governing curve against the annual target: shaded, the
    parameter band (5-95 % over the posterior parameters); dashed, the sampling band."""
    with_parameters = all(c.parameter_lower is not None for c in life.main)
    sampling = {c.member: (c.beta_lower, c.beta_upper) for c in life.main}
    if with_parameters:
        return plot_beta_over_time(
            life.main[0].years_from_assessment, {c.member: c.beta for c in life.main},
            life.target.beta,
            bands={c.member: (_finite(c.parameter_lower), _finite(c.parameter_upper))
                   for c in life.main},
            sampling_bands=sampling, band_label="parameter band (5-95 %)",
            time_label="Years after the assessment (annual beta)", period="1-year")
    return plot_beta_over_time(
        life.main[0].years_from_assessment, {c.member: c.beta for c in life.main},
        life.target.beta, bands=sampling, band_label="sampling band (+/- 2 standard errors)",
        time_label="Years after the assessment (annual beta)", period="1-year")


def worth_figure(worth):
    """Posterior beta each test programme could lead to, against the horizon target."""
    results = worth.ranking.results
    return plot_preposterior_beta({r.programme: r.posterior_beta for r in results},
                                  worth.decision.horizon_target_beta,
                                  current_beta=results[0].prior_beta,
                                  period=f"{worth.decision.horizon_years}-year")


def drivers_figure(drivers, words, top: int = 4):
    """Importance factors and total Sobol indices of each member's governing mode
    (`assess.site.drivers.MemberDrivers`), variables in plain ``words``."""
    panels = {}
    for d in drivers:
        panels[f"{d.member}, {d.mode} (\u03b2 = {d.beta:.2f})"] = [
            {"label": words(name), "importance": (d.importance or {}).get(name),
             "sobol_total": (d.sobol_total or {}).get(name)} for name in d.variables()]
    return plot_risk_drivers(panels, top=top)
