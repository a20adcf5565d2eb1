"""Bending resistance of a singly reinforced rectangular RC section, mean-value form.

Source: EN 1992-1-1:2004 3.1.7(3) rectangular stress block with all partial factors
and alpha_cc equal to 1: lambda = 0.8, eta = 1.0 for f_c <= 50 MPa, and
lambda = 0.8 - (f_c - 50)/400, eta = 1.0 - (f_c - 50)/200 for 50 < f_c <= 90 MPa,
applied to each sampled strength (`stress_block_factors`); the ultimate strain
epsilon_cu3 follows Table 3.1 in the same way.
"""

from __future__ import annotations

import dataclasses

import numpy as np

from assess.errors import InputError
from assess.limit_states._checks import as_array

#: Ultimate concrete strain of the stress block, epsilon_cu3, f_c <= 50 MPa
#: (EN 1992-1-1:2004 Table 3.1) [-].
ULTIMATE_CONCRETE_STRAIN = 0.0035

#: Elastic modulus of reinforcing steel (EN 1992-1-1 3.2.7(4)) [MPa].
STEEL_MODULUS_MPA = 200_000.0

#: Neutral-axis ratio above which a ductility warning is due: EN 1992-1-1 5.6.3,
#: x_u/d <= 0.45 for plastic analysis up to C50/60 (from memory) [-].
DUCTILITY_LIMIT_X_OVER_D = 0.45

OVER_REINFORCED_MODES = ("balanced", "strain_compatibility")

#: Highest strength class of EN 1992-1-1 Table 3.1 [MPa]; stronger samples keep its factors.
MAX_TABULATED_STRENGTH_MPA = 90.0


def stress_block_factors(concrete_strength_mpa):
    """Stress-block factors (lambda, eta) of EN 1992-1-1:2004 3.1.7(3) [-], vectorised.

    lambda = 0.8 and eta = 1.0 for f_c <= 50 MPa; lambda = 0.8 - (f_c - 50)/400,
    eta = 1.0 - (f_c - 50)/200 for 50 < f_c <= 90 MPa (expressions 3.19-3.22);
    above 90 MPa (outside the code) the 90 MPa values 0.7 and 0.8 are kept.
    """
    fc = np.clip(np.asarray(concrete_strength_mpa, dtype=float), 50.0, MAX_TABULATED_STRENGTH_MPA)
    return 0.8 - (fc - 50.0) / 400.0, 1.0 - (fc - 50.0) / 200.0


def ultimate_concrete_strain(concrete_strength_mpa):
    """epsilon_cu3 of EN 1992-1-1:2004 Table 3.1 [-], vectorised.

    3.5 per mille for f_c <= 50 MPa, 2.6 + 35 ((90 - f_c)/100)^4 per mille above
    (from memory), the 90 MPa value 2.6 per mille beyond.
    """
    raw = np.asarray(concrete_strength_mpa, dtype=float)
    fc = np.clip(raw, 50.0, MAX_TABULATED_STRENGTH_MPA)
    return np.where(raw <= 50.0, 3.5, 2.6 + 35.0 * ((90.0 - fc) / 100.0) ** 4) / 1000.0


@dataclasses.dataclass(frozen=True)
class FlexureDetails:
    """Bending resistance with its neutral-axis information (arrays broadcast together).

    Attributes
    ----------
    moment_knm : ndarray
        Bending resistance M_R [kNm].
    x_over_d : ndarray
        Neutral-axis depth over effective depth at M_R [-].
    over_reinforced : ndarray of bool
        True where the steel would not yield (x/d above the balanced ratio).
    ductility_warning : ndarray of bool
        True where x/d > 0.45 (EN 1992-1-1 5.6.3, from memory).
    """

    moment_knm: np.ndarray
    x_over_d: np.ndarray
    over_reinforced: np.ndarray
    ductility_warning: np.ndarray


def balanced_x_over_d(yield_strength_mpa, *, steel_modulus_mpa: float = STEEL_MODULUS_MPA,
                      ultimate_strain: float = ULTIMATE_CONCRETE_STRAIN):
    """Neutral-axis ratio at which the steel just yields as the concrete crushes [-].

    x_bal/d = eps_cu / (eps_cu + f_y/E_s) (plane sections, strain compatibility).
    """
    fy = as_array(yield_strength_mpa, "yield strength", unit="MPa")
    return ultimate_strain / (ultimate_strain + fy / steel_modulus_mpa)


def flexural_capacity_details(steel_area_mm2, yield_strength_mpa, concrete_strength_mpa,
                              width_mm, effective_depth_mm, *, lam=None,
                              eta=None, over_reinforced: str = "balanced",
                              steel_modulus_mpa: float = STEEL_MODULUS_MPA,
                              ultimate_strain=None) -> FlexureDetails:
    """Bending resistance and neutral-axis ratio; see `flexural_capacity` for parameters."""
    if over_reinforced not in OVER_REINFORCED_MODES:
        raise InputError(f"over_reinforced must be one of {OVER_REINFORCED_MODES}, "
                         f"got {over_reinforced!r}")
    area = as_array(steel_area_mm2, "steel area", unit="mm2", allow_zero=True)
    fy = as_array(yield_strength_mpa, "yield strength", unit="MPa")
    fc = as_array(concrete_strength_mpa, "concrete strength", unit="MPa")
    lam_fc, eta_fc = stress_block_factors(fc)
    lam = lam_fc if lam is None else np.asarray(lam, dtype=float)
    eta = eta_fc if eta is None else np.asarray(eta, dtype=float)
    if not (np.all(lam > 0) and np.all(lam <= 1) and np.all(eta > 0) and np.all(eta <= 1)):
        raise InputError(f"stress-block factors must satisfy 0 < lam, eta <= 1, got {lam}, {eta}")
    ultimate_strain = (ultimate_concrete_strain(fc) if ultimate_strain is None
                       else np.asarray(ultimate_strain, dtype=float))
    b = as_array(width_mm, "width", unit="mm")
    d = as_array(effective_depth_mm, "effective depth", unit="mm")

    block = lam * eta * fc * b                      # compression force per mm of x [N/mm]
    x = area * fy / block                           # steel yields: equilibrium
    xi_bal = ultimate_strain / (ultimate_strain + fy / steel_modulus_mpa)
    over = x > xi_bal * d
    if over_reinforced == "balanced":
        # Cap at the capacity when steel yields and concrete crushes together; the
        # strain-compatible capacity of an over-reinforced section is higher, so
        # this is on the safe side.
        x = np.minimum(x, xi_bal * d)
        moment = block * x * (d - lam * x / 2.0)
    else:
        # Elastic steel, sigma_s = E_s eps_cu (d - x)/x: block x^2 + a x - a d = 0,
        # a = A_s E_s eps_cu. Positive root; continuous with the yielding branch.
        a = area * steel_modulus_mpa * ultimate_strain
        x_elastic = (-a + np.sqrt(a * a + 4.0 * block * a * d)) / (2.0 * block)
        x = np.where(over, x_elastic, x)
        moment = block * x * (d - lam * x / 2.0)
    x_over_d = x / d
    return FlexureDetails(moment_knm=moment / 1.0e6, x_over_d=x_over_d,
                          over_reinforced=np.asarray(over),
                          ductility_warning=np.asarray(x_over_d > DUCTILITY_LIMIT_X_OVER_D))


def flexural_capacity(steel_area_mm2, yield_strength_mpa, concrete_strength_mpa, width_mm,
                      effective_depth_mm, *, lam=None, eta=None,
                      over_reinforced: str = "balanced") -> np.ndarray:
    """Mean bending resistance M_R of a singly reinforced rectangular section [kNm].

    Vectorised: all array arguments broadcast together (one entry per sample).

    Parameters
    ----------
    steel_area_mm2 : array-like
        Tension reinforcement area A_s, residual if corroded [mm2] (slabs: per
        ``width_mm``, usually a 1000 mm strip).
    yield_strength_mpa : array-like
        Yield strength f_y [MPa].
    concrete_strength_mpa : array-like
        In-situ compressive strength f_c [MPa]; it also sets lam, eta and
        epsilon_cu3 when they are not given (EN 1992-1-1 3.1.7(3), Table 3.1).
    width_mm : array-like
        Width of the compression zone b [mm].
    effective_depth_mm : array-like
        Effective depth d [mm].
    lam, eta : float or array-like, optional
        Stress-block depth and intensity factors [-]; default from f_c by
        EN 1992-1-1 3.1.7(3) (`stress_block_factors`).
    over_reinforced : str
        ``"balanced"`` (default): where the steel would not yield, the neutral
        axis is capped at the balanced depth x_bal = eps_cu/(eps_cu + f_y/E_s) d,
        i.e. the capacity is that of the balanced section (safe side).
        ``"strain_compatibility"``: elastic steel stress from plane sections.

    Returns
    -------
    ndarray
        M_R [kNm]; multiply by the model uncertainty theta_R in the limit state.

    Notes
    -----
    .. math::
        x = \\frac{A_s f_y}{\\lambda \\eta f_c b}, \\qquad
        M_R = A_s f_y \\left(d - \\frac{\\lambda x}{2}\\right)

    Use `flexural_capacity_details` for the neutral-axis ratio x/d, the
    over-reinforced flag and the ductility warning (x/d > 0.45).

    Examples
    --------
    >>> round(float(flexural_capacity(1000.0, 500.0, 30.0, 1000.0, 200.0)), 2)
    95.83
    """
    return flexural_capacity_details(steel_area_mm2, yield_strength_mpa, concrete_strength_mpa,
                                     width_mm, effective_depth_mm, lam=lam, eta=eta,
                                     over_reinforced=over_reinforced).moment_knm


def neutral_axis_ratio(steel_area_mm2, yield_strength_mpa, concrete_strength_mpa, width_mm,
                       effective_depth_mm, *, lam=None, eta=None) -> np.ndarray:
    """Neutral-axis ratio x/d with yielding steel, uncapped [-] (for ductility checks)."""
    area = as_array(steel_area_mm2, "steel area", unit="mm2", allow_zero=True)
    fy = as_array(yield_strength_mpa, "yield strength", unit="MPa")
    fc = as_array(concrete_strength_mpa, "concrete strength", unit="MPa")
    b = as_array(width_mm, "width", unit="mm")
    d = as_array(effective_depth_mm, "effective depth", unit="mm")
    lam_fc, eta_fc = stress_block_factors(fc)
    lam = lam_fc if lam is None else lam
    eta = eta_fc if eta is None else eta
    return area * fy / (lam * eta * fc * b) / d

