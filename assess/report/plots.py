"""Plots for the assessment report; each function returns a matplotlib Figure.

Figures are built on `matplotlib.figure.Figure` with the Agg canvas attached
directly, never through pyplot: they are not registered in pyplot's figure
manager, so making many of them in a long run does not grow memory and no
display is needed. Embed them with `ReportDocument` sections' ``add_figure`` or
save them with ``fig.savefig``.

Every axis label carries its unit in brackets ([-] for the reliability index
beta, [years] for time). Members get a colour of Paul Tol's colour-blind-safe
"muted" scheme (Tol 2021, "Colour schemes", SRON/EPS/TN/09-002) and a marker of
their own (`member_style`: no two members share both); the target reliability is
a dashed orange line (Tol "vibrant" #EE7733, in no member colour) in every plot.
Legends of member plots sit outside the axes, so they never cover a curve, the
target or its label; the beta axis is limited to the range that matters
(`beta_limits`).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.dates import AutoDateLocator, DateFormatter
from matplotlib.figure import Figure
from scipy import stats

from assess.errors import InputError
from assess.life.crossing import target_crossing_time

#: Line and marker colours, in order of use (blues and greys of our own choosing).
PALETTE = ("#2b4c6f", "#8a8a8a", "#5d8fbf", "#3d3d3d", "#9fbcd6", "#b3b3b3", "#1f6e8c", "#646464")
#: Member colours: Paul Tol's colour-blind-safe "muted" scheme (Tol 2021, SRON/EPS/TN/09-002).
MEMBER_COLOURS = ("#332288", "#88CCEE", "#44AA99", "#117733", "#999933", "#DDCC77",
                  "#CC6677", "#882255", "#AA4499")
#: Member markers; with 9 colours and 9 markers, 81 members get distinct pairs.
MEMBER_MARKERS = ("o", "s", "D", "^", "v", "P", "X", "h", "<")
#: Colour of the target reliability line.
TARGET_COLOUR = "#EE7733"
#: The beta axis shows at most this far above the target (higher values are drawn at the
#: top edge and named) [-].
BETA_ABOVE_TARGET = 3.0


def member_style(k: int) -> tuple[str, str]:
    """(colour, marker) of the k-th member; distinct pairs for k < 81."""
    n = len(MEMBER_COLOURS)
    colour = MEMBER_COLOURS[k % n]
    marker = MEMBER_MARKERS[(k % n + k // n) % len(MEMBER_MARKERS)]
    return colour, marker


def beta_limits(values: Any, target: float) -> tuple[float, float]:
    """Readable limits of a beta axis: the finite values and the target, at most
    `BETA_ABOVE_TARGET` above the target, with a margin of 0.3 [-]."""
    arr = np.asarray(values, dtype=float).ravel()
    finite = arr[np.isfinite(arr)]
    high = min(float(finite.max()) if finite.size else target, target + BETA_ABOVE_TARGET)
    low = float(finite.min()) if finite.size else target
    return min(low, target) - 0.3, max(high, target) + 0.3
BETA_LABEL = "Reliability index \u03b2 [-]"
_FIG_WIDTH = 7.5  # [in]


def _new_figure(nrows: int = 1, height: float = 4.2, sharex: bool = False):
    fig = Figure(figsize=(_FIG_WIDTH, height), layout="constrained")
    FigureCanvasAgg(fig)
    axes = fig.subplots(nrows, 1, sharex=sharex, squeeze=False)[:, 0]
    for ax in axes:
        ax.set_prop_cycle(color=PALETTE)
        ax.grid(True, color="#dcdfe3", linewidth=0.6)
        ax.set_axisbelow(True)
        for side in ("top", "right"):
            ax.spines[side].set_visible(False)
        ax.tick_params(labelsize=9)
    return fig, axes


def _target_hline(ax, beta_target: float, period: str = "") -> None:
    words = f" ({period})" if period else ""
    ax.axhline(beta_target, color=TARGET_COLOUR, linestyle="--", linewidth=1.4,
               label=f"Target \u03b2{words} = {beta_target:.2f}")


def _clear_corner(ax) -> None:
    """Hide a beta tick label that the first or last date/time tick label would overlap
    (they meet at the lower corners of the axes)."""
    fig = ax.figure
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    x_boxes = [t.get_window_extent(renderer) for t in ax.get_xticklabels()
               if t.get_visible() and t.get_text()]
    for label in ax.get_yticklabels():
        if not (label.get_visible() and label.get_text()):
            continue
        box = label.get_window_extent(renderer)
        if any(box.overlaps(other) for other in x_boxes):
            label.set_visible(False)


def _legend_outside(ax) -> None:
    """Legend to the right of the axes: it cannot cover curves, the target or labels."""
    entries = len(ax.get_legend_handles_labels()[1])
    ax.legend(frameon=False, fontsize=8, loc="upper left", bbox_to_anchor=(1.01, 1.0),
              borderaxespad=0.0, ncols=1 if entries <= 12 else 2)


def _as_1d(values: Any, name: str) -> np.ndarray:
    try:
        arr = np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{name} must be numbers; {exc}.", column=name) from None
    if arr.ndim == 0:
        arr = arr.reshape(1)
    if arr.ndim != 1:
        raise InputError(f"{name} must be one-dimensional, got shape {arr.shape}.", column=name)
    return arr


def _target(beta_target: Any) -> float:
    value = float(beta_target)
    if not math.isfinite(value):
        raise InputError(f"beta_target must be a finite number, got {beta_target!r}.",
                         column="beta_target")
    return value


def _axis_label(quantity: str, unit: str) -> str:
    return f"{quantity} [{unit}]"


# --------------------------------------------------------------------------------------
# (1) prior vs posterior


def _support(source: Any, name: str) -> tuple[float, float]:
    if hasattr(source, "ppf") and hasattr(source, "pdf"):
        lo, hi = float(source.ppf(1e-3)), float(source.ppf(1 - 1e-3))
        if not (math.isfinite(lo) and math.isfinite(hi)):
            mean, sd = float(source.mean()), float(source.std())
            lo, hi = mean - 4 * sd, mean + 4 * sd
        return lo, hi
    draws = _draws(source, name)
    lo, hi = np.quantile(draws, [1e-3, 1 - 1e-3])
    pad = 0.1 * (hi - lo)
    return float(lo - pad), float(hi + pad)


def _draws(source: Any, name: str) -> np.ndarray:
    draws = np.asarray(source, dtype=float).ravel()
    draws = draws[np.isfinite(draws)]
    if draws.size < 2 or np.ptp(draws) == 0:
        raise InputError(f"{name} needs at least two different finite draws to estimate a density.",
                         column=name)
    return draws


def _density(source: Any, grid: np.ndarray, name: str) -> np.ndarray:
    if hasattr(source, "pdf"):
        return np.asarray(source.pdf(grid), dtype=float)
    return stats.gaussian_kde(_draws(source, name))(grid)


def plot_prior_posterior(prior: Any, posterior: Any, *, quantity: str, unit: str,
                         observations: Any = None, prior_label: str = "Prior",
                         posterior_label: str = "Posterior", n_points: int = 400) -> Figure:
    """Prior and posterior probability density of one updated quantity.

    Parameters
    ----------
    prior, posterior : frozen scipy distribution or array_like of draws
        Anything with ``pdf`` and ``ppf`` is drawn exactly; arrays of draws
        (e.g. an MCMC trace, any shape) through a Gaussian kernel density
        estimate (Scott's bandwidth, `scipy.stats.gaussian_kde`).
    quantity : str
        Name of the quantity, e.g. "In-situ concrete compressive strength".
    unit : str
        Its unit, e.g. "MPa" (shown as ``[MPa]``; the density axis as ``[1/MPa]``).
    observations : array_like, optional
        Test results, drawn as a rug of tick marks on the horizontal axis [unit].
    prior_label, posterior_label : str
        Legend entries.
    n_points : int, default 400
        Points of the evaluation grid [-].

    Returns
    -------
    matplotlib.figure.Figure
        One axes; lines: prior, posterior, and the rug if observations are given.
    """
    ranges = [_support(prior, "prior"), _support(posterior, "posterior")]
    if observations is not None:
        obs = _as_1d(observations, "observations")
        obs = obs[np.isfinite(obs)]
    else:
        obs = np.empty(0)
    lo = min(r[0] for r in ranges)
    hi = max(r[1] for r in ranges)
    if obs.size:
        lo, hi = min(lo, float(obs.min())), max(hi, float(obs.max()))
    grid = np.linspace(lo, hi, int(n_points))
    fig, (ax,) = _new_figure()
    ax.plot(grid, _density(prior, grid, "prior"), color=PALETTE[1], linestyle="--",
            linewidth=1.6, label=prior_label)
    post = _density(posterior, grid, "posterior")
    ax.plot(grid, post, color=PALETTE[0], linewidth=2.0, label=posterior_label)
    ax.fill_between(grid, post, color=PALETTE[0], alpha=0.12, linewidth=0)
    if obs.size:
        ax.plot(obs, np.zeros_like(obs), linestyle="none", marker="|", markersize=14,
                color=PALETTE[3], label=f"Test results (n = {obs.size})")
    ax.set_xlim(lo, hi)
    ax.set_ylim(bottom=0)
    ax.set_xlabel(_axis_label(quantity, unit))
    ax.set_ylabel(f"Probability density [1/{unit}]")
    ax.legend(frameon=False, fontsize=9)
    return fig


# --------------------------------------------------------------------------------------
# (2) beta before / after per member and failure mode


def plot_beta_before_after(members: Sequence[str], beta_before: Any, beta_after: Any,
                           beta_target: Any, *, modes: Sequence[str] | None = None,
                           before_label: str = "Before updating",
                           after_label: str = "After updating") -> Figure:
    """Reliability index per member and failure mode, before and after updating.

    Parameters
    ----------
    members : sequence of str
        Member names, one per point.
    beta_before, beta_after : array_like
        Reliability index before and after updating with test data [-]. +inf
        (no failure found) is drawn at the top of the plot with an upward
        triangle; NaN is left out.
    beta_target : float or array_like
        Target reliability index [-]: one value (a horizontal line) or one per
        member (a short bar at each member).
    modes : sequence of str, optional
        Failure mode per point (e.g. "flexure", "punching"), added to the labels.
    before_label, after_label : str
        Legend entries.

    Returns
    -------
    matplotlib.figure.Figure
        One axes; lines: before markers, after markers, target.
    """
    labels = [str(m) for m in members]
    n = len(labels)
    before = _as_1d(beta_before, "beta_before")
    after = _as_1d(beta_after, "beta_after")
    target = _as_1d(beta_target, "beta_target")
    if modes is not None:
        if len(modes) != n:
            raise InputError(f"modes has {len(modes)} entries but members has {n}.", column="modes")
        labels = [f"{m}\n{mode}" for m, mode in zip(labels, modes)]
    for name, arr in (("beta_before", before), ("beta_after", after)):
        if arr.size != n:
            raise InputError(f"{name} has {arr.size} values but members has {n}.", column=name)
    if target.size not in (1, n) or not np.all(np.isfinite(target)):
        raise InputError(f"beta_target must be one finite value or {n} finite values.",
                         column="beta_target")
    x = np.arange(n, dtype=float)
    finite = np.concatenate([before[np.isfinite(before)], after[np.isfinite(after)], target])
    low, high = beta_limits(finite, float(target.min()))
    high = max(high, float(target.max()) + 0.3)
    cap = high - 0.2  # values above (and +inf) are drawn here and named
    beyond = (before > cap) | (after > cap)
    top = high + 0.5 if np.any(beyond) else high

    fig, (ax,) = _new_figure(height=4.4 + (0.8 if n > 6 else 0.0))
    if n > 10:
        fig.set_figwidth(max(_FIG_WIDTH, 0.42 * n + 1.5))
    ax.vlines(x, np.minimum(np.clip(before, None, cap), np.clip(after, None, cap)),
              np.maximum(np.clip(before, None, cap), np.clip(after, None, cap)),
              color="#c4c9cf", linewidth=2.5, zorder=1)
    ax.plot(x, np.clip(before, None, cap), linestyle="none", marker="o", markersize=8,
            markerfacecolor="white", markeredgecolor=PALETTE[1], markeredgewidth=1.8,
            label=before_label, zorder=3)
    ax.plot(x, np.clip(after, None, cap), linestyle="none", marker="s", markersize=7,
            color=PALETTE[0], label=after_label, zorder=4)
    for xi, b, a in zip(x, before, after):
        if np.isposinf(b) or np.isposinf(a):
            ax.annotate("\u03b2 = \u221e", (xi, cap), textcoords="offset points",
                        xytext=(0, 8), ha="center", fontsize=8, color=PALETTE[3])
        elif b > cap or a > cap:
            ax.annotate(f"{max(b, a):.1f}", (xi, cap), textcoords="offset points",
                        xytext=(0, 8), ha="center", fontsize=8, color=PALETTE[3])
    if target.size == 1:
        _target_hline(ax, float(target[0]))
    else:
        segments_x = np.column_stack([x - 0.35, x + 0.35, np.full(n, np.nan)]).ravel()
        segments_y = np.column_stack([target, target, np.full(n, np.nan)]).ravel()
        ax.plot(segments_x, segments_y, color=TARGET_COLOUR, linestyle="--", linewidth=1.6,
                label="Target \u03b2")
    ax.set_xticks(x)
    if n > 6:
        ax.set_xticklabels([lab.replace("\n", " ") for lab in labels], rotation=90, fontsize=8)
    else:
        ax.set_xticklabels(labels, fontsize=9)
    ax.set_xlim(-0.6, n - 0.4)
    ax.set_ylim(low, top)
    ax.set_xlabel("Member and failure mode")
    ax.set_ylabel(BETA_LABEL)
    _legend_outside(ax)
    return fig


# --------------------------------------------------------------------------------------
# (3) beta(t) remaining-life curves


def plot_beta_over_time(times: Any, curves: Mapping[str, Any], beta_target: Any, *,
                        bands: Mapping[str, tuple[Any, Any]] | None = None,
                        time_label: str = "Time from assessment", time_unit: str = "years",
                        mark_crossings: bool = True,
                        sampling_bands: Mapping[str, tuple[Any, Any]] | None = None,
                        band_label: str | None = None, period: str = "") -> Figure:
    """Reliability index against time per member, with the target line.

    Parameters
    ----------
    times : array_like
        Increasing times shared by all curves [time_unit].
    curves : mapping of str to array_like
        beta(t) per member at `times` [-].
    beta_target : float
        Target reliability index [-].
    bands : mapping of str to (lower, upper), optional
        Uncertainty band per member (e.g. 5 % and 95 % values of beta(t)) [-].
    time_label, time_unit : str
        Horizontal axis label and unit.
    mark_crossings : bool, default True
        Mark where each curve first falls below the target (end of remaining
        life), found by `target_crossing_time`.
    sampling_bands : mapping of str to (lower, upper), optional
        Sampling band of each curve (its estimator's error), drawn as thin dashed lines [-].
    band_label : str, optional
        Legend text of the shaded ``bands``.

    Returns
    -------
    matplotlib.figure.Figure
        One axes; lines: one per member, the target, and one line of crossing
        markers when any curve crosses.
    """
    t = _as_1d(times, "times")
    if t.size < 2 or np.any(np.diff(t) <= 0):
        raise InputError("times must hold at least two strictly increasing values.", column="times")
    target = _target(beta_target)
    if not curves:
        raise InputError("curves is empty: give beta(t) for at least one member.", column="curves")
    fig, (ax,) = _new_figure()
    crossings_t, crossings_b = [], []
    shown: list = []
    for k, (name, values) in enumerate(curves.items()):
        beta = _as_1d(values, f"curves[{name!r}]")
        if beta.size != t.size:
            raise InputError(f"curve {name!r} has {beta.size} values but times has {t.size}.",
                             column=f"curves[{name!r}]")
        colour, marker = member_style(k)
        if bands and name in bands:
            lower = _as_1d(bands[name][0], f"bands[{name!r}][0]")
            upper = _as_1d(bands[name][1], f"bands[{name!r}][1]")
            if lower.size != t.size or upper.size != t.size:
                raise InputError(f"band of {name!r} must have {t.size} lower and upper values.",
                                 column=f"bands[{name!r}]")
            ax.fill_between(t, lower, upper, color=colour, alpha=0.15, linewidth=0)
        if sampling_bands and name in sampling_bands:
            for edge in sampling_bands[name]:
                ax.plot(t, _as_1d(edge, f"sampling_bands[{name!r}]"), color=colour,
                        linewidth=0.8, linestyle="--")
        every = max(1, t.size // 8)
        ax.plot(t, beta, color=colour, linewidth=1.8, label=str(name), marker=marker,
                markersize=5, markevery=(k % every, every))
        shown.append(beta)
        if mark_crossings:
            tc = target_crossing_time(t, beta, target)
            if math.isfinite(tc):
                crossings_t.append(tc)
                crossings_b.append(target)
    _target_hline(ax, target, period)
    if bands and band_label:
        ax.fill_between([], [], [], color="grey", alpha=0.15, linewidth=0, label=band_label)
    if sampling_bands:
        ax.plot([], [], color="grey", linewidth=0.8, linestyle="--",
                label="sampling band (+/- 2 standard errors)")
    if crossings_t:
        ax.plot(crossings_t, crossings_b, linestyle="none", marker="|", markersize=14,
                markeredgewidth=2.0, color=TARGET_COLOUR, label="Falls below target")
    ax.set_xlim(t[0], t[-1])
    ax.set_ylim(*beta_limits(np.concatenate(shown), target))
    ax.set_xlabel(_axis_label(time_label, time_unit))
    ax.set_ylabel(BETA_LABEL)
    _legend_outside(ax)
    _clear_corner(ax)
    return fig


# --------------------------------------------------------------------------------------
# (4) preposterior distribution of beta per test programme


def share_below_target(betas: Any, beta_target: float) -> float:
    """Share of outcomes whose reliability index is below the target [-].

    +inf counts as above the target; NaN outcomes are left out.
    """
    b = _as_1d(betas, "betas")
    b = b[~np.isnan(b)]
    return float(np.mean(b < beta_target)) if b.size else math.nan


def plot_preposterior_beta(programmes: Mapping[str, Any], beta_target: Any, *,
                           overlay: bool = False, bins: int = 40,
                           current_beta: float | None = None, period: str = "") -> Figure:
    """Distribution of the reliability index that each test programme could lead to.

    Parameters
    ----------
    programmes : mapping of str to array_like
        Simulated posterior beta outcomes per candidate test programme [-]
        (preposterior analysis). Non-finite values are not drawn but count in
        the share below target (+inf as above).
    beta_target : float
        Target reliability index [-].
    overlay : bool, default False
        One axes with step outlines for all programmes, instead of one panel each.
    bins : int, default 40
        Histogram bins over the common range [-].
    current_beta : float, optional
        Reliability index with today's information [-], drawn as a dotted line.
    period : str, optional
        Reference period of the betas and the target, e.g. ``"15-year"``, written
        in the labels.

    Returns
    -------
    matplotlib.figure.Figure
        One panel per programme (or one axes if `overlay`); each holds the
        target line (and the current-beta line if given). The share of
        outcomes below the target is in each panel title or legend entry.
    """
    target = _target(beta_target)
    if not programmes:
        raise InputError("programmes is empty: give simulated beta outcomes for at least one "
                         "test programme.", column="programmes")
    data = {}
    for name, values in programmes.items():
        arr = _as_1d(values, f"programmes[{name!r}]")
        if not np.any(np.isfinite(arr)):
            raise InputError(f"programme {name!r} has no finite beta outcome.",
                             column=f"programmes[{name!r}]")
        data[str(name)] = arr
    finite_all = np.concatenate([a[np.isfinite(a)] for a in data.values()] + [np.array([target])])
    lo, hi = float(finite_all.min()), float(finite_all.max())
    if hi - lo < 1e-9:
        lo, hi = lo - 0.5, hi + 0.5
    edges = np.linspace(lo, hi, int(bins) + 1)
    n_panels = 1 if overlay else len(data)
    fig, axes = _new_figure(nrows=n_panels, height=(4.2 if overlay else 1.0 + 1.9 * n_panels),
                            sharex=True)
    for k, (name, arr) in enumerate(data.items()):
        ax = axes[0] if overlay else axes[k]
        colour = PALETTE[k % len(PALETTE)] if overlay else PALETTE[0]
        share = share_below_target(arr, target)
        text = f"{name}: P(\u03b2 < target) = {share:.1%}"
        ax.hist(arr[np.isfinite(arr)], bins=edges, density=True,
                histtype="step" if overlay else "stepfilled", color=colour,
                alpha=1.0 if overlay else 0.55, linewidth=1.6, label=text if overlay else None)
        if not overlay:
            ax.set_title(text, fontsize=10, loc="left")
    for ax in (axes[:1] if overlay else axes):
        words = f" ({period})" if period else ""
        ax.axvline(target, color=TARGET_COLOUR, linestyle="--", linewidth=1.4,
                   label=f"Target \u03b2{words} = {target:.2f}")
        if current_beta is not None and math.isfinite(float(current_beta)):
            ax.axvline(float(current_beta), color=PALETTE[3], linestyle=":", linewidth=1.4,
                       label=f"Current \u03b2{words} = {float(current_beta):.2f}")
        ax.set_ylabel("Probability density [-]", fontsize=9 if not overlay else None)
    _legend_outside(axes[0])
    words = f", {period}" if period else ""
    axes[-1].set_xlabel(f"Reliability index after testing \u03b2{words} [-]")
    return fig


# --------------------------------------------------------------------------------------
# (5) beta per member against campaign date


def _dates(dates: Any) -> np.ndarray:
    values = list(dates)
    out = np.empty(len(values), dtype="datetime64[D]")
    for i, value in enumerate(values):
        try:
            out[i] = np.datetime64(value, "D")
        except (TypeError, ValueError):
            raise InputError(f"campaign date {value!r} is not a date; expected e.g. 2024-05-17.",
                             column=f"dates[{i}]") from None
    if np.any(np.isnat(out)):
        raise InputError("campaign dates must not be empty.", column="dates")
    return out


def plot_beta_history(dates: Any, history: Mapping[str, Any], beta_target: Any, *,
                      period: str = "") -> Figure:
    """Reliability index per member at each inspection campaign, with the target line.

    Parameters
    ----------
    dates : sequence of date, datetime, numpy.datetime64 or ISO 8601 str
        Campaign dates, in any order.
    history : mapping of str to array_like
        beta per member at each date [-]; NaN where a member was not assessed.
    beta_target : float
        Target reliability index [-].

    Returns
    -------
    matplotlib.figure.Figure
        One axes; lines: one per member (markers joined in date order), and the target.
    """
    when = _dates(dates)
    target = _target(beta_target)
    if not history:
        raise InputError("history is empty: give beta per campaign for at least one member.",
                         column="history")
    order = np.argsort(when, kind="stable")
    fig, (ax,) = _new_figure()
    shown = []
    for k, (name, values) in enumerate(history.items()):
        beta = _as_1d(values, f"history[{name!r}]")
        if beta.size != when.size:
            raise InputError(f"member {name!r} has {beta.size} values but there are "
                             f"{when.size} campaign dates.", column=f"history[{name!r}]")
        keep = order[np.isfinite(beta[order])]
        colour, marker = member_style(k)
        ax.plot(when[keep], beta[keep], marker=marker, markersize=6,
                linewidth=1.5, color=colour, label=str(name))
        shown.append(beta[keep])
    _target_hline(ax, target, period)
    locator = AutoDateLocator(minticks=3, maxticks=8)
    ax.xaxis.set_major_locator(locator)
    ax.xaxis.set_major_formatter(DateFormatter("%Y-%m"))
    span = max((when.max() - when.min()).astype(int), 60)
    pad = np.timedelta64(int(0.06 * span), "D")
    ax.set_xlim(when.min() - pad, when.max() + pad)
    ax.set_xlabel("Inspection campaign date [yyyy-mm]")
    ax.set_ylabel(BETA_LABEL)
    ax.set_ylim(*beta_limits(np.concatenate(shown) if shown else [], target))
    _legend_outside(ax)
    _clear_corner(ax)
    return fig


__all__ = [
    "MEMBER_COLOURS", "MEMBER_MARKERS", "PALETTE", "TARGET_COLOUR", "beta_limits",
    "member_style", "plot_prior_posterior", "plot_beta_before_after",
    "plot_beta_over_time", "plot_preposterior_beta",
    "share_below_target", "plot_beta_history",
]


def plot_risk_drivers(panels: Mapping[str, Sequence[Mapping[str, Any]]], *,
                      top: int = 5) -> Figure:
    """Which uncertainty drives the risk: one panel per member, horizontal bars of the
    importance factor alpha^2 and the total Sobol index of each variable [-].

    ``panels`` maps a panel title to rows with ``label`` (plain words),
    ``importance`` and ``sobol_total`` (None where not computed), largest first; the
    first ``top`` rows of each are drawn.
    """
    if not panels:
        raise InputError("plot_risk_drivers: no member to draw")
    fig = Figure(figsize=(_FIG_WIDTH, 1.0 + 1.35 * len(panels)), layout="constrained")
    FigureCanvasAgg(fig)
    axes = fig.subplots(len(panels), 1, squeeze=False)[:, 0]
    for ax, (title, rows) in zip(axes, panels.items()):
        rows = list(rows)[:top]
        y = np.arange(len(rows))[::-1]
        for offset, key, colour, label in ((0.2, "importance", PALETTE[0],
                                            "importance factor \u03b1\u00b2 (design point)"),
                                           (-0.2, "sobol_total", PALETTE[2],
                                            "total Sobol index (spread of the margin)")):
            values = [r.get(key) for r in rows]
            shown = [v if v is not None and math.isfinite(v) else 0.0 for v in values]
            if any(v is not None for v in values):
                ax.barh(y + offset, shown, height=0.38, color=colour, label=label)
        ax.set_yticks(y, [r["label"] for r in rows], fontsize=8)
        ax.set_xlim(0.0, 1.0)
        ax.set_title(title, fontsize=9, loc="left")
        ax.grid(True, axis="x", color="#dcdfe3", linewidth=0.6)
        ax.set_axisbelow(True)
        for side in ("top", "right"):
            ax.spines[side].set_visible(False)
        ax.tick_params(labelsize=8)
    axes[-1].set_xlabel("Share [-]")
    handles, labels = axes[0].get_legend_handles_labels()
    for ax in axes[1:]:
        for h, lab in zip(*ax.get_legend_handles_labels()):
            if lab not in labels:
                handles.append(h)
                labels.append(lab)
    fig.legend(handles, labels, loc="outside upper center", ncols=2, frameon=False, fontsize=8)
    return fig
