"""SORM: curvatures and the Breitung, Hohenbichler-Rackwitz and Tvedt probabilities against
exact probabilities of parabolic surfaces (scipy quadrature) and published benchmarks."""

import math

import numpy as np
import pytest
from scipy import stats

from assess.reliability import StandardNormalProblem, run_method, sorm
from assess.reliability.sorm import sorm_probabilities, tangent_basis
from tests.reference_problems import (
    curved_quadratic,
    paraboloid,
    paraboloid_pf,
    quartic,
)


@pytest.mark.parametrize("beta, kappas", [(3.0, [0.2]), (3.0, [-0.1]), (2.0, [0.5]),
                                          (4.0, [0.3, -0.1])])
def test_curvatures_of_a_paraboloid_are_recovered(beta, kappas):
    # g = beta - u_n + 1/2 sum kappa_i v_i^2 has principal curvatures kappa_i at (0.., beta)
    # exactly (differential geometry of the paraboloid, closed form).
    result = sorm(paraboloid(beta, kappas).problem)
    assert result.details["form_beta"] == pytest.approx(beta, abs=1e-6)
    assert np.allclose(np.sort(result.details["curvatures"]), np.sort(kappas), atol=1e-4)


@pytest.mark.parametrize("beta, kappas", [(3.0, [0.1]), (3.0, [0.3]), (3.0, [-0.1]),
                                          (5.0, [0.2]), (2.0, [1.0]), (3.0, [0.2, -0.1])])
def test_improved_forms_against_the_exact_paraboloid(beta, kappas):
    # Exact pf of the paraboloid by scipy quadrature (tests/reference_problems.paraboloid).
    # Asymptotic accuracy (Breitung 1984; Hohenbichler et al. 1987; Tvedt 1990): Tvedt's
    # three-term form is within 1.5 % here, Breitung within 10 %, and Hohenbichler-Rackwitz
    # within 3 %; the reported pf is Tvedt's.
    case = paraboloid(beta, kappas)
    result = sorm(case.problem)
    assert result.details["pf_tvedt"] == pytest.approx(case.pf, rel=0.015)
    assert result.details["pf_hohenbichler_rackwitz"] == pytest.approx(case.pf, rel=0.03)
    assert result.details["pf_breitung"] == pytest.approx(case.pf, rel=0.10)
    assert result.pf == result.details["pf_tvedt"]
    assert result.beta == pytest.approx(stats.norm.isf(result.pf))
    # FORM ignores the curvature: for these curvatures it is further off than Tvedt.
    assert (abs(result.details["form_pf"] - case.pf)
            > abs(result.details["pf_tvedt"] - case.pf))


def test_gauss_hermite_reference_matches_scipy_quad():
    # The paraboloid reference (Gauss-Hermite) against scipy's adaptive quadrature.
    from scipy import integrate
    for beta, kappa in ((3.0, 0.2), (3.0, -0.1), (2.0, 1.0)):
        exact, _ = integrate.quad(lambda v, b=beta, k=kappa: stats.norm.pdf(v) * stats.norm.sf(
            b + 0.5 * k * v * v), -np.inf, np.inf, epsabs=0.0, epsrel=1e-11)
        assert paraboloid_pf(beta, [kappa]) == pytest.approx(exact, rel=1e-8)


def test_breitung_formula_closed_form():
    # Breitung (1984): pf = Phi(-beta) prod (1 + beta kappa)^-1/2, evaluated by hand.
    values = sorm_probabilities(3.0, [0.2, -0.1])
    expected = stats.norm.sf(3.0) / math.sqrt((1 + 0.6) * (1 - 0.3))
    assert values["breitung"] == pytest.approx(expected, rel=1e-12)
    psi = stats.norm.pdf(3.0) / stats.norm.sf(3.0)
    expected_hr = stats.norm.sf(3.0) / math.sqrt((1 + 0.2 * psi) * (1 - 0.1 * psi))
    assert values["hohenbichler_rackwitz"] == pytest.approx(expected_hr, rel=1e-12)


def test_saddle_point_is_refused_with_a_warning():
    # kappa = -0.5 at beta = 3: 1 + beta kappa < 0, the point is not a local minimum of the
    # distance (Breitung's formula undefined); SORM falls back to FORM and says so.
    result = sorm(StandardNormalProblem(lambda u: 3.0 - u[:, 1] - 0.25 * u[:, 0] ** 2, 2))
    assert not result.converged
    assert any("saddle" in w for w in result.warnings)
    assert result.pf == pytest.approx(stats.norm.sf(3.0), rel=1e-6)


def test_tangent_basis_is_orthonormal_and_normal_to_alpha():
    alpha = np.array([0.3, -0.4, 0.5, 0.7])
    alpha /= np.linalg.norm(alpha)
    basis = tangent_basis(alpha)
    assert basis.shape == (4, 3)
    assert np.allclose(basis.T @ basis, np.eye(3), atol=1e-12)
    assert np.allclose(alpha @ basis, 0.0, atol=1e-12)


def test_curved_benchmark_published_value_and_crude_monte_carlo():
    # Engelund & Rackwitz (1993) curved case, pf = 4.21e-3 (from memory), checked here by
    # 2 x 10^6 crude Monte Carlo samples (CoV about 0.011): within 3 CoV plus the quoting
    # precision. Tvedt's SORM is within 2 % of it; FORM is far off (about 48 % high).
    case = curved_quadratic()
    u = np.random.default_rng(7).standard_normal((2_000_000, 2))
    pf_mc = float(np.mean(case.problem.g(u) <= 0.0))
    cov_mc = math.sqrt((1 - pf_mc) / (u.shape[0] * pf_mc))
    assert abs(case.pf - pf_mc) <= 3 * cov_mc * pf_mc + 0.5e-5
    result = sorm(curved_quadratic().problem)
    assert result.details["curvatures"][0] == pytest.approx(0.4, abs=1e-3)  # 2 x 0.1 x 2
    assert result.pf == pytest.approx(pf_mc, rel=0.02 + 3 * cov_mc)
    assert result.details["form_pf"] / pf_mc > 1.4


def test_quartic_defeats_form_and_sorm_and_the_check_says_so():
    # g = 3 - u2 + (4 u1)^4: curvature zero at the design point, so FORM = SORM = Phi(-3),
    # about 7.6 times the exact pf (scipy quad, 1.78e-4). Through run_method the independent
    # check disagrees, importance sampling at the design point arbitrates, and the warning
    # names the method to trust.
    case = quartic()
    result = run_method(quartic().problem, "sorm", seed=5)
    assert result.pf / case.pf > 5
    check = result.details["check"]
    assert not check["agree"]
    assert check["trust"] in ("subset_simulation", "importance_sampling")
    trusted = (check["pf"], check["cov"]) if check["trust"] == "subset_simulation" else (
        check["importance_sampling"]["pf"], check["importance_sampling"]["cov"])
    assert abs(math.log(trusted[0] / case.pf)) < 3 * math.sqrt(math.log1p(trusted[1] ** 2))
    assert any("Trust" in w for w in result.warnings)
