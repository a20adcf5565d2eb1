"""Report plots: right artists, units on the axes, vectorised input, no pyplot leak."""

from __future__ import annotations

import datetime as dt
import re

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np
import pytest  # noqa: E402
from matplotlib.dates import num2date  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402
from scipy import stats  # noqa: E402
from scipy.integrate import trapezoid  # noqa: E402

from assess.errors import InputError  # noqa: E402
from assess.life.crossing import target_crossing_time  # noqa: E402
from assess.report import plots  # noqa: E402

UNIT = re.compile(r"\[[^\]]+\]")
TARGET = 4.2  # JCSS PMC annual target for normal cost of safety, CC2 (from memory)


def lines_with(ax, colour):
    return [ln for ln in ax.get_lines()
            if matplotlib.colors.same_color(ln.get_color(), colour)]


def assert_units(ax):
    assert UNIT.search(ax.get_ylabel()), ax.get_ylabel()


def test_prior_posterior_frozen_distributions_match_scipy_pdf():
    # Conjugate normal update with known sigma (closed form, any Bayesian text):
    # prior N(30, 5^2), n = 9 results of mean 36 and sigma 6 -> posterior precision
    # 1/25 + 9/36, mean (30/25 + 9*36/36) / precision.
    precision = 1 / 25 + 9 / 36
    post_mean = (30 / 25 + 9 * 36 / 36) / precision
    prior, posterior = stats.norm(30, 5), stats.norm(post_mean, precision ** -0.5)
    fig = plots.plot_prior_posterior(prior, posterior, quantity="In-situ strength", unit="MPa")
    assert isinstance(fig, Figure)
    (ax,) = fig.axes
    prior_line, post_line = ax.get_lines()
    x = prior_line.get_xdata()
    np.testing.assert_allclose(prior_line.get_ydata(), stats.norm.pdf(x, 30, 5), rtol=1e-12)
    np.testing.assert_allclose(post_line.get_ydata(), posterior.pdf(x), rtol=1e-12)
    # Grid spans both distributions' 0.1 % .. 99.9 % quantiles.
    assert x[0] <= prior.ppf(1e-3) and x[-1] >= max(prior.ppf(0.999), posterior.ppf(0.999))
    assert ax.get_xlabel() == "In-situ strength [MPa]"
    assert "[1/MPa]" in ax.get_ylabel()


def test_prior_posterior_from_draws_is_a_density():
    rng = np.random.default_rng(11)
    prior_draws = rng.normal(30.0, 5.0, size=(4, 500))  # chains x draws, any shape
    post_draws = rng.normal(35.0, 2.0, size=(4, 1000))
    obs = rng.normal(35.0, 4.0, size=9)
    fig = plots.plot_prior_posterior(prior_draws, post_draws, quantity="fc", unit="MPa",
                                     observations=obs)
    (ax,) = fig.axes
    prior_line, post_line, rug = ax.get_lines()
    x, y = post_line.get_xdata(), post_line.get_ydata()
    # A Gaussian KDE integrates to 1 and keeps the sample mean (symmetric kernel);
    # the grid cuts < 1e-3 of the mass in each tail.
    assert trapezoid(y, x) == pytest.approx(1.0, abs=3e-3)
    mean = trapezoid(x * y, x) / trapezoid(y, x)
    assert mean == pytest.approx(post_draws.mean(), abs=0.02)
    np.testing.assert_allclose(np.sort(rug.get_xdata()), np.sort(obs))


def test_prior_posterior_rejects_constant_draws():
    with pytest.raises(InputError, match="posterior"):
        plots.plot_prior_posterior(stats.norm(0, 1), np.ones(50), quantity="x", unit="mm")


def test_beta_before_after_markers_and_target():
    members = ["D2-S1", "D2-S1", "C4", "C5"]
    modes = ["flexure", "punching", "shear", "flexure"]
    before = np.array([3.9, 2.9, 4.4, 3.1])
    after = np.array([4.5, 3.2, np.inf, 3.0])
    fig = plots.plot_beta_before_after(members, before, after, TARGET, modes=modes)
    (ax,) = fig.axes
    lines = ax.get_lines()
    assert len(lines) == 3  # before markers, after markers, target line
    before_line, after_line, target_line = lines
    np.testing.assert_allclose(before_line.get_ydata(), before)
    shown_after = np.asarray(after_line.get_ydata(), dtype=float)
    np.testing.assert_allclose(shown_after[[0, 1, 3]], after[[0, 1, 3]])
    assert np.isfinite(shown_after[2]) and shown_after[2] > after[np.isfinite(after)].max()
    assert before_line.get_marker() == "o" and after_line.get_marker() == "s"
    assert np.all(np.asarray(target_line.get_ydata(), dtype=float) == TARGET)
    labels = [t.get_text() for t in ax.get_xticklabels()]
    assert labels == [f"{m}\n{mode}" for m, mode in zip(members, modes)]
    assert_units(ax)
    assert any("\u221e" in t.get_text() for t in ax.texts)


def test_beta_before_after_per_member_targets():
    targets = np.array([4.2, 3.7, 4.7])  # JCSS annual targets, CC2 / high, CC2, CC3 (from memory)
    fig = plots.plot_beta_before_after(["A", "B", "C"], [4.0, 3.5, 5.0], [4.1, 3.9, 4.9], targets)
    (ax,) = fig.axes
    target_line = ax.get_lines()[2]
    y = np.asarray(target_line.get_ydata(), dtype=float)
    np.testing.assert_allclose(y[np.isfinite(y)], np.repeat(targets, 2))


def test_beta_before_after_length_mismatch():
    with pytest.raises(InputError, match="beta_after"):
        plots.plot_beta_before_after(["A", "B"], [1.0, 2.0], [1.0], TARGET)


def test_target_crossing_time_linear_closed_form():
    # beta(t) = 4.6 - 0.04 t crosses 4.2 at t = 10 exactly; a coarse grid must
    # still find it (linear interpolation is exact for a straight line).
    t = np.array([0.0, 7.0, 14.0, 30.0])
    assert target_crossing_time(t, 4.6 - 0.04 * t, TARGET) == pytest.approx(10.0)
    assert np.isnan(target_crossing_time(t, np.full(4, 5.0), TARGET))
    assert target_crossing_time(t, np.full(4, 3.0), TARGET) == 0.0


def test_beta_over_time_curves_band_and_crossings():
    t = np.linspace(0.0, 50.0, 26)
    curves = {"D2-S1": 4.6 - 0.04 * t, "C4": 5.2 - 0.01 * t, "B7": 4.9 - 0.07 * t}
    bands = {"D2-S1": (4.3 - 0.05 * t, 4.9 - 0.03 * t)}
    fig = plots.plot_beta_over_time(t, curves, TARGET, bands=bands)
    (ax,) = fig.axes
    lines = ax.get_lines()
    assert len(lines) == 3 + 1 + 1  # members, target, crossing markers
    for line, (name, beta) in zip(lines, curves.items()):
        assert line.get_label() == name
        np.testing.assert_allclose(line.get_ydata(), beta)
    crossings = lines[-1]
    # Closed-form crossings of the straight lines: (4.6-4.2)/0.04 = 10, (4.9-4.2)/0.07 = 10;
    # C4 stays above 4.2 until t = 100 > 50.
    np.testing.assert_allclose(np.sort(crossings.get_xdata()), [10.0, 10.0])
    assert len(ax.collections) == 1  # the one band
    assert ax.get_xlabel() == "Time from assessment [years]"
    assert_units(ax)


def test_preposterior_panels_and_share_below_target():
    rng = np.random.default_rng(5)
    n = 4000
    programmes = {"6 more cores": rng.normal(4.4, 0.3, n), "Cover survey": rng.normal(4.1, 0.5, n)}
    fig = plots.plot_preposterior_beta(programmes, TARGET, current_beta=4.0)
    assert len(fig.axes) == 2
    for ax, (name, mean, sd) in zip(fig.axes, [("6 more cores", 4.4, 0.3),
                                                ("Cover survey", 4.1, 0.5)]):
        assert [ln.get_xdata()[0] for ln in ax.get_lines()] == [TARGET, 4.0]
        share = float(ax.get_title(loc="left").rsplit("=", 1)[1].strip().rstrip("%")) / 100
        expected = stats.norm.cdf(TARGET, mean, sd)  # scipy reference
        # Binomial standard error of a share from n outcomes; 3 of them plus the
        # 0.0005 rounding of the one-decimal percentage in the title.
        assert abs(share - expected) <= 3 * np.sqrt(expected * (1 - expected) / n) + 0.0005
        assert ax.get_title(loc="left").startswith(name)
        assert_units(ax)
    assert "[-]" in fig.axes[-1].get_xlabel()


def test_preposterior_overlay_and_infinite_outcomes():
    betas = np.array([3.0, 4.0, 5.0, np.inf])
    assert plots.share_below_target(betas, TARGET) == 0.5  # inf counts as above
    fig = plots.plot_preposterior_beta({"A": betas, "B": betas + 0.5}, TARGET, overlay=True)
    (ax,) = fig.axes
    assert len(ax.get_lines()) == 1  # target only
    assert len(ax.patches) == 2  # one step outline per programme
    legend = [t.get_text() for t in ax.get_legend().get_texts()]
    assert any(t.startswith("A: P(") and t.endswith("50.0%") for t in legend)


def test_beta_history_dates_in_order_and_gaps():
    dates = ["2026-11-02", dt.date(2018, 4, 1), np.datetime64("2022-05-10")]
    history = {"D2-S1": [4.51, 4.9, 4.6], "C4": [5.1, 5.5, np.nan]}
    fig = plots.plot_beta_history(dates, history, TARGET)
    (ax,) = fig.axes
    d2, c4, target = ax.get_lines()
    years = [num2date(x).year for x in matplotlib.dates.date2num(d2.get_xdata())]
    assert years == [2018, 2022, 2026]
    np.testing.assert_allclose(d2.get_ydata(), [4.9, 4.6, 4.51])
    np.testing.assert_allclose(c4.get_ydata(), [5.5, 5.1])  # NaN campaign left out
    assert target.get_ydata()[0] == TARGET
    assert UNIT.search(ax.get_xlabel())
    assert_units(ax)


def test_beta_history_bad_date_names_position():
    with pytest.raises(InputError, match=r"dates\[1\]"):
        plots.plot_beta_history(["2020-01-01", "spring"], {"A": [4.0, 4.1]}, TARGET)


def test_plots_do_not_register_with_pyplot():
    before = set(plt.get_fignums())
    t = np.linspace(0, 10, 11)
    for _ in range(3):
        plots.plot_prior_posterior(stats.norm(0, 1), stats.norm(1, 0.5), quantity="x", unit="mm")
        plots.plot_beta_before_after(["A"], [3.0], [3.5], TARGET)
        plots.plot_beta_over_time(t, {"A": 5 - 0.1 * t}, TARGET)
        plots.plot_preposterior_beta({"A": np.linspace(3, 5, 50)}, TARGET)
        plots.plot_beta_history(["2020-01-01", "2024-01-01"], {"A": [4.0, 4.1]}, TARGET)
    assert set(plt.get_fignums()) == before


# -- readability: distinct member styles, axis ranges, no overlapping text ----------------
MEMBERS_18 = [f"M{k:02d}-{k % 4 + 1}" for k in range(18)]


def test_member_styles_are_distinct_pairs_and_colour_blind_safe():
    pairs = [plots.member_style(k) for k in range(81)]
    assert len(set(pairs)) == 81
    # Tol (2021) "muted": nine colours, none of them pure red or pure green
    assert len(set(plots.MEMBER_COLOURS)) == 9


def test_life_and_history_give_each_member_its_own_colour_and_marker():
    from tests.plot_text import outside_figure, overlapping_texts

    t = np.arange(51.0)
    curves = {m: 5.5 - 0.02 * (k + 1) * t for k, m in enumerate(MEMBERS_18[:12])}
    fig = plots.plot_beta_over_time(t, curves, TARGET, period="1-year")
    (ax,) = fig.axes
    styles = [(matplotlib.colors.to_hex(ln.get_color()), ln.get_marker())
              for ln in ax.get_lines()[:12]]
    assert len(set(styles)) == 12
    assert overlapping_texts(fig) == [] and outside_figure(fig) == []
    dates = ["2018-04-01", "2022-05-10", "2026-11-02"]
    history = {m: [4.8 - 0.05 * k, 4.6 - 0.05 * k, 4.4 - 0.05 * k]
               for k, m in enumerate(MEMBERS_18[:12])}
    fig = plots.plot_beta_history(dates, history, TARGET, period="1-year")
    (ax,) = fig.axes
    styles = [(matplotlib.colors.to_hex(ln.get_color()), ln.get_marker())
              for ln in ax.get_lines()[:12]]
    assert len(set(styles)) == 12
    assert overlapping_texts(fig) == [] and outside_figure(fig) == []
    # the legend is outside the axes: it cannot cover the target line or its label
    legend_box = ax.get_legend().get_window_extent(fig.canvas.get_renderer())
    axes_box = ax.get_window_extent(fig.canvas.get_renderer())
    assert legend_box.x0 >= axes_box.x1


def test_eighteen_members_labels_do_not_overlap_and_beta_axis_is_readable():
    from tests.plot_text import outside_figure, overlapping_texts

    n = len(MEMBERS_18)
    before = np.linspace(3.0, 9.5, n)
    after = before + 0.2
    after[3] = np.inf
    fig = plots.plot_beta_before_after(MEMBERS_18, before, after, TARGET,
                                       modes=["flexure"] * n)
    (ax,) = fig.axes
    assert overlapping_texts(fig) == []
    assert outside_figure(fig) == []
    low, high = ax.get_ylim()
    # at most BETA_ABOVE_TARGET above the target (+ margins), not up to 10
    assert high <= TARGET + plots.BETA_ABOVE_TARGET + 0.3 + 0.5 + 1e-9
    assert low <= 3.0
    # values beyond the top are named on the plot
    assert any(t.get_text() == "9.7" for t in ax.texts)


def test_value_of_information_plot_names_the_reference_period():
    rng = np.random.default_rng(2)
    fig = plots.plot_preposterior_beta({"6 cores": rng.normal(3.4, 0.3, 500)}, 3.54,
                                       current_beta=1.22, period="15-year")
    legend = [t.get_text() for t in fig.axes[0].get_legend().get_texts()]
    assert "Target \u03b2 (15-year) = 3.54" in legend
    assert "Current \u03b2 (15-year) = 1.22" in legend
    assert "15-year" in fig.axes[-1].get_xlabel()
