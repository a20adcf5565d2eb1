"""Shear resistance of members without shear reinforcement, mean-value form.

Source: EN 1992-1-1:2004 6.2.2(1), expression (6.2.a)/(6.2.b), with all partial
factors equal to 1 and a mean coefficient in place of C_Rd,c.
"""

from __future__ import annotations

import numpy as np

from assess.limit_states._checks import as_array, choose_coefficient, effective_depth_factor

#: Coefficient of the concrete shear formula: name -> (value, source).
#: ``"mean"`` is the default: a mean-value formula paired with an unbiased theta
#: (assess.priors.MODEL_UNCERTAINTY "ec2_shear_mean"). 0.23 agrees with
#: 0.18 exp(1.645 x 0.15) = 0.230 [computed], i.e. 0.18 read as the 5 % fractile
#: of a lognormal test/prediction ratio with CoV 0.15.
SHEAR_COEFFICIENTS: dict[str, tuple[float, str]] = {
    "mean": (0.23, "mean coefficient C_R,m from the test database behind EC2 6.2.2 "
                   "(Koenig & Fischer 1995, CEB Bulletin 224) (from memory)"),
    "characteristic": (0.18, "EN 1992-1-1 6.2.2(1): C_Rd,c = 0.18/gamma_c, i.e. 0.18 with "
                             "gamma_c = 1 (characteristic-type value)"),
}

#: Axial-stress factor k1 for one-way shear (EN 1992-1-1 6.2.2(1), recommended) [-].
K1_SHEAR = 0.15

#: Upper limit of the longitudinal reinforcement ratio (EN 1992-1-1 6.2.2(1)) [-].
RHO_L_MAX = 0.02


def minimum_shear_strength(concrete_strength_mpa, k) -> np.ndarray:
    """v_min = 0.035 k^(3/2) f_c^(1/2) [MPa] (EN 1992-1-1 6.2.2(1), expression 6.3N)."""
    return 0.035 * np.asarray(k) ** 1.5 * np.sqrt(np.asarray(concrete_strength_mpa))


def shear_capacity(steel_area_mm2, concrete_strength_mpa, width_mm, effective_depth_mm, *,
                   coefficient="mean", keep_caps: bool = True, keep_v_min: bool = False,
                   axial_stress_mpa=0.0) -> np.ndarray:
    """Mean shear resistance V_R of a member without shear reinforcement [kN].

    Vectorised: all array arguments broadcast together (one entry per sample).

    Parameters
    ----------
    steel_area_mm2 : array-like
        Tension reinforcement A_sl anchored at least l_bd + d beyond the section,
        residual if corroded [mm2].
    concrete_strength_mpa : array-like
        In-situ compressive strength f_c [MPa].
    width_mm : array-like
        Smallest web width b_w (slabs: 1000 mm strip) [mm].
    effective_depth_mm : array-like
        Effective depth d [mm].
    coefficient : {"mean", "characteristic"} or float
        C in C k (100 rho_l f_c)^(1/3); see `SHEAR_COEFFICIENTS`. Pair the choice
        with its model uncertainty
        (``assess.priors.resistance_model_uncertainty("shear", coefficient)``).
    keep_caps : bool
        Keep the code limits k <= 2, rho_l <= 0.02 and sigma_cp <= 0.2 f_c
        (default True; they lower the capacity, i.e. safe side).
    keep_v_min : bool
        Apply the lower bound v_min (default False: v_min is a design floor, not a
        mean prediction, and raises the capacity).
    axial_stress_mpa : array-like
        sigma_cp = N/A_c, compression positive [MPa]; adds k1 sigma_cp, k1 = 0.15.

    Returns
    -------
    ndarray
        V_R [kN]; multiply by theta_R in the limit state.

    Notes
    -----
    .. math::
        V_R = \\left[C\\, k\\, (100 \\rho_l f_c)^{1/3} + k_1 \\sigma_{cp}\\right] b_w d,
        \\quad k = 1 + \\sqrt{200/d},\\ \\rho_l = A_{sl}/(b_w d)

    Examples
    --------
    >>> round(float(shear_capacity(1000.0, 30.0, 1000.0, 200.0)), 2)
    226.89
    """
    c = choose_coefficient(coefficient, SHEAR_COEFFICIENTS, "shear")
    area = as_array(steel_area_mm2, "steel area", unit="mm2", allow_zero=True)
    fc = as_array(concrete_strength_mpa, "concrete strength", unit="MPa")
    b = as_array(width_mm, "width", unit="mm")
    d = as_array(effective_depth_mm, "effective depth", unit="mm")
    sigma_cp = np.asarray(axial_stress_mpa, dtype=float)
    k = effective_depth_factor(d, keep_caps)
    rho = area / (b * d)
    if keep_caps:
        rho = np.minimum(rho, RHO_L_MAX)
        sigma_cp = np.minimum(sigma_cp, 0.2 * fc)
    v = c * k * np.cbrt(100.0 * rho * fc)
    if keep_v_min:
        v = np.maximum(v, minimum_shear_strength(fc, k))
    v = v + K1_SHEAR * sigma_cp
    return v * b * d / 1000.0
