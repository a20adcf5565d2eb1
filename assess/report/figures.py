"""Figures of the site assessment (built on `assess.report.plots`)."""

from __future__ import annotations

import numpy as np

from assess.report.figure_cache import Drawing
from assess.report.plots import (
    plot_beta_before_after,
    plot_beta_over_time,
    plot_preposterior_beta,
    plot_prior_posterior,
    plot_risk_drivers,
)
from assess.site.knowledge import LABELS, QUANTITIES, predictive_draws


def prior_posterior_drawings(update, quantities=None) -> dict:
    """`prior_posterior_figures`, not drawn yet (`Drawing` per (quantity, zone))."""
    figures = {}
    for name, spec in QUANTITIES.items():
        if quantities is not None and name not in quantities:
            continue
        frame = update.data.get(name)
        if frame is None or frame.empty:
            continue
        quantity, unit = LABELS[name]
        for zone, group in frame.groupby("zone"):
            figures[(name, zone)] = Drawing(plot_prior_posterior, (
                predictive_draws(update.before[zone][name], spec.log),
                predictive_draws(update.after[zone][name], spec.log)), dict(
                quantity=f"{quantity}, zone {zone}", unit=unit,
                observations=group["value"].to_numpy(),
                prior_label="Design information", posterior_label="After site tests"))
    return figures


def prior_posterior_figures(update, quantities=None) -> dict:
    """One figure per (quantity, zone) that has data: design prior vs posterior predictive.

    ``quantities``: names of `QUANTITIES` to draw (default: all)."""
    return {key: drawing.figure()
            for key, drawing in prior_posterior_drawings(update, quantities).items()}


def before_after_drawing(assessment) -> Drawing:
    """Beta before and after per member and mode against the target (not drawn yet)."""
    rows = [r for r in assessment.results]  # every member and mode
    return Drawing(plot_beta_before_after, ([r.member for r in rows], [r.before.beta for r in rows],
                                            [r.after.beta for r in rows], assessment.target.beta),
                   dict(modes=[r.mode for r in rows]))


def before_after_figure(assessment):
    """Beta before and after per member and mode against the target."""
    return before_after_drawing(assessment).figure()


def _finite(values):
    """+/-inf (no failed sample in a draw) left out of a drawn band."""
    values = np.asarray(values, dtype=float)
    return np.where(np.isfinite(values), values, np.nan)


def life_drawing(life) -> Drawing:
    """beta(t) of each member's governing curve against the annual target: shaded, the
    parameter band (5-95 % over the posterior parameters); dashed, the sampling band."""
    with_parameters = all(c.parameter_lower is not None for c in life.main)
    sampling = {c.member: (c.beta_lower, c.beta_upper) for c in life.main}
    if with_parameters:
        return Drawing(plot_beta_over_time, (
            life.main[0].years_from_assessment, {c.member: c.beta for c in life.main},
            life.target.beta), dict(
            bands={c.member: (_finite(c.parameter_lower), _finite(c.parameter_upper))
                   for c in life.main},
            sampling_bands=sampling, band_label="parameter band (5-95 %)",
            time_label="Years after the assessment (annual beta)", period="1-year"))
    return Drawing(plot_beta_over_time, (
        life.main[0].years_from_assessment, {c.member: c.beta for c in life.main},
        life.target.beta), dict(
        bands=sampling, band_label="sampling band (+/- 2 standard errors)",
        time_label="Years after the assessment (annual beta)", period="1-year"))


def life_figure(life):
    """beta(t) of each member's governing curve against the annual target (`life_drawing`)."""
    return life_drawing(life).figure()


def worth_drawing(worth) -> Drawing:
    """Posterior beta each test programme could lead to, against the horizon target
    (not drawn yet)."""
    results = worth.ranking.results
    return Drawing(plot_preposterior_beta, ({r.programme: r.posterior_beta for r in results},
                                            worth.decision.horizon_target_beta),
                   dict(current_beta=results[0].prior_beta,
                        period=f"{worth.decision.horizon_years}-year"))


def worth_figure(worth):
    """Posterior beta each test programme could lead to, against the horizon target."""
    return worth_drawing(worth).figure()


def drivers_drawing(drivers, words, top: int = 4) -> Drawing:
    """Importance factors and total Sobol indices of each member's governing mode
    (`assess.site.drivers.MemberDrivers`), variables in plain ``words`` (not drawn yet)."""
    panels = {}
    for d in drivers:
        panels[f"{d.member}, {d.mode} (\u03b2 = {d.beta:.2f})"] = [
            {"label": words(name), "importance": (d.importance or {}).get(name),
             "sobol_total": (d.sobol_total or {}).get(name)} for name in d.variables()]
    return Drawing(plot_risk_drivers, (panels,), dict(top=top))


def drivers_figure(drivers, words, top: int = 4):
    """Importance factors and total Sobol indices of each member's governing mode."""
    return drivers_drawing(drivers, words, top).figure()
