"""The value-of-information beta surrogate is judged by its error in the member's beta (what
the costs use), not by a mode that carries no weight in the member's pf; more design points
from the bulk of the posterior; a second subset-simulation stand-in where FORM stalls."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from assess.distributions import make_distribution
from assess.model import ProbabilisticModel
from assess.site import worth_decision
from assess.site.worth_decision import (
    _fit_modes,
    further_design,
    member_beta,
    member_loo_errors,
)


def test_member_beta_is_the_series_bound_of_the_modes():
    # Phi^-1 of the sum of the modes' pf (Cornell 1967 upper bound), against scipy
    betas = np.array([[3.0, 4.0], [2.5, 2.5]])
    pf = stats.norm.sf(betas).sum(axis=1)
    assert member_beta(betas) == pytest.approx(stats.norm.isf(pf), rel=1e-12)
    assert np.isfinite(member_beta(np.array([[60.0, 70.0]]))).all()   # no inf - inf


def test_member_error_of_one_mode_is_its_own_leave_one_out_error():
    rng = np.random.default_rng(3)
    betas = 3.0 + 0.3 * rng.standard_normal((20, 1))
    residuals = 0.1 * rng.standard_normal((20, 1))
    # one mode: the member's beta is the mode's beta, so the errors are the residuals
    assert member_loo_errors(betas, residuals)[0] == pytest.approx(
        math.sqrt(np.mean(residuals**2)), rel=1e-9)


def test_member_error_of_two_equal_modes_follows_the_closed_form():
    # two modes at beta b, the second mispredicted by e: the member beta moves from
    # Phi^-1(2 Phi(-b)) to Phi^-1(Phi(-b) + Phi(-(b - e))) (closed form, scipy)
    b, e = 3.0, 0.4
    betas = np.array([[b, b]])
    errors = member_loo_errors(betas, np.array([[0.0, e]]))
    expected = stats.norm.isf(2 * stats.norm.sf(b)) - stats.norm.isf(
        stats.norm.sf(b) + stats.norm.sf(b - e))
    assert errors[1] == pytest.approx(abs(expected), rel=1e-9)
    assert errors[0] == 0.0


def test_a_mode_far_above_the_weakest_one_does_not_decide_the_fitness():
    # mode A is an exact quadratic in theta (leave-one-out error 0); mode B is noisy (own
    # leave-one-out error about 1 in beta) but 4 above A: it adds Phi(-(b+4))/Phi(-b) < 1e-3
    # of the pf (closed form), so its error in the member's beta stays far below the
    # warning level 0.10; the same noise on a mode level with A is refused (> 0.30).
    rng = np.random.default_rng(4)
    theta = rng.standard_normal((48, 3))
    center, scale = np.zeros(3), np.ones(3)
    smooth = 3.0 + 0.3 * theta[:, 0] - 0.1 * theta[:, 1] ** 2
    noisy = 1.0 * rng.standard_normal(48)
    rows = np.arange(48)
    ok = np.ones((48, 2), dtype=bool)
    far = np.column_stack([smooth, smooth + 4.0 + noisy])
    surrogates, left_out, errors = _fit_modes(["A", "B"], theta, rows, far, ok, center, scale,
                                              "keep as is", "M1")
    assert left_out == 0
    assert surrogates["A"].loo_rmse_ < 1e-9
    assert surrogates["B"].loo_rmse_ > 0.5
    assert errors["A"] < 1e-9
    assert errors["B"] < 0.02
    near = np.column_stack([smooth, smooth + noisy])
    _, _, errors = _fit_modes(["A", "B"], theta, rows, near, ok, center, scale,
                              "keep as is", "M1")
    assert errors["B"] > worth_decision.SURROGATE_FAILURE_RMSE


def test_further_design_points_are_new_spread_and_repeatable():
    design = np.array([0, 5, 17, 99])
    more = further_design(100, design, 10)
    assert more.size == 10 and not set(more) & set(design)
    assert np.array_equal(more, further_design(100, design, 10))
    assert more.min() <= 2 and more.max() >= 97              # spread over all the draws
    assert further_design(4, np.arange(4), 5).size == 0


def test_stand_in_for_form_runs_again_with_more_samples(monkeypatch):
    # R - S with normal R ~ N(10, 1), S ~ N(5, 1): beta = 5/sqrt(2) (closed form). With an
    # unreachable CoV limit the stand-in runs twice, the second time with 4 x the samples.
    model = ProbabilisticModel()
    model.add("R", make_distribution("normal", mean=10.0, std=1.0))
    model.add("S", make_distribution("normal", mean=5.0, std=1.0))
    problem = model.problem(lambda x: x["R"] - x["S"])
    monkeypatch.setattr(worth_decision, "FALLBACK_MAX_COV", 0.0)
    result = worth_decision._sampled_beta(problem, seed=1)
    assert result.settings["n_per_level"] == 4 * worth_decision.FALLBACK_SAMPLES
    assert not result.converged
    monkeypatch.setattr(worth_decision, "FALLBACK_MAX_COV", 1.0)
    result = worth_decision._sampled_beta(problem, seed=1)
    assert result.settings["n_per_level"] == worth_decision.FALLBACK_SAMPLES
    assert result.converged
    # within 4 of its own CoVs of the closed-form pf
    pf = stats.norm.sf(5 / math.sqrt(2))
    assert abs(result.pf - pf) <= 4 * result.cov * pf
