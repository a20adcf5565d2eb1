"""Punching resistance of flat slabs at columns without shear reinforcement, mean-value form.

Source: EN 1992-1-1:2004 6.4.2 (control perimeter), 6.4.3(6) (beta factors) and
6.4.4(1) (resistance), with partial factors 1 and a mean coefficient.
"""

from __future__ import annotations

import numpy as np

from assess.errors import InputError
from assess.limit_states._checks import as_array, choose_coefficient, effective_depth_factor
from assess.limit_states.shear import SHEAR_COEFFICIENTS, minimum_shear_strength

#: Coefficient C of the punching formula: the same pair as for one-way shear
#: (EN 1992-1-1 6.4.4 uses C_Rd,c = 0.18/gamma_c as 6.2.2). Pair with
#: assess.priors.MODEL_UNCERTAINTY "ec2_punching_mean" / "_characteristic".
PUNCHING_COEFFICIENTS = SHEAR_COEFFICIENTS

#: Eccentricity factor beta by column position, braced structures with adjacent
#: spans within 25 % (EN 1992-1-1 6.4.3(6), Figure 6.21N; edge and corner from memory).
PUNCHING_BETA = {"interior": 1.15, "edge": 1.4, "corner": 1.5}

#: Axial-stress factor k1 for punching (EN 1992-1-1 6.4.4(1), from memory) [-].
K1_PUNCHING = 0.1

RHO_L_MAX = 0.02


def control_perimeter(effective_depth_mm, *, column_c1_mm=None, column_c2_mm=None,
                      column_diameter_mm=None, position: str = "interior") -> np.ndarray:
    """Basic control perimeter u1 at 2d from the column face [mm] (EN 1992-1-1 6.4.2).

    Parameters
    ----------
    effective_depth_mm : array-like
        Mean effective depth d = (d_y + d_z)/2 [mm].
    column_c1_mm, column_c2_mm : array-like, optional
        Rectangular column sides [mm]; at an edge c1 is perpendicular to the edge.
    column_diameter_mm : array-like, optional
        Circular column diameter D [mm] (interior columns only).
    position : {"interior", "edge", "corner"}
        Column position.

    Returns
    -------
    ndarray
        u1 [mm]: interior rectangular 2(c1 + c2) + 4 pi d; interior circular
        pi (D + 4d); edge 2 c1 + c2 + 2 pi d; corner c1 + c2 + pi d (EN 1992-1-1
        Figures 6.13 and 6.15, the latter from memory, free edges flush with the
        column faces).
    """
    d = as_array(effective_depth_mm, "effective depth", unit="mm")
    if position not in PUNCHING_BETA:
        raise InputError(f"column position must be one of {sorted(PUNCHING_BETA)}, got {position!r}")
    if column_diameter_mm is not None:
        if column_c1_mm is not None or column_c2_mm is not None:
            raise InputError("give either the column diameter or the sides c1, c2, not both")
        if position != "interior":
            raise InputError("circular columns are supported at interior positions only; give "
                             "an equivalent rectangle c1 x c2 for edge and corner columns")
        diameter = as_array(column_diameter_mm, "column diameter", unit="mm")
        return np.pi * (diameter + 4.0 * d)
    if column_c1_mm is None or column_c2_mm is None:
        raise InputError("give the column sides column_c1_mm and column_c2_mm, or column_diameter_mm")
    c1 = as_array(column_c1_mm, "column side c1", unit="mm")
    c2 = as_array(column_c2_mm, "column side c2", unit="mm")
    if position == "interior":
        return 2.0 * (c1 + c2) + 4.0 * np.pi * d
    if position == "edge":
        return 2.0 * c1 + c2 + 2.0 * np.pi * d
    return c1 + c2 + np.pi * d


def reinforcement_ratio(area_per_metre_mm2, effective_depth_mm) -> np.ndarray:
    """rho = A_s/(1000 d) of a slab strip 1000 mm wide [-] (A_s in mm2/m, d in mm)."""
    area = as_array(area_per_metre_mm2, "steel area per metre", unit="mm2/m", allow_zero=True)
    d = as_array(effective_depth_mm, "effective depth", unit="mm")
    return area / (1000.0 * d)


def punching_capacity(rho_ly, rho_lz, concrete_strength_mpa, effective_depth_mm, *,
                      column_c1_mm=None, column_c2_mm=None, column_diameter_mm=None,
                      position: str = "interior", coefficient="mean", beta=None,
                      keep_caps: bool = True, keep_v_min: bool = False,
                      axial_stress_mpa=0.0) -> np.ndarray:
    """Mean punching resistance at the basic control perimeter, as a column force [kN].

    V_R = v_R u1 d / beta, so that the limit state is g = theta_R V_R - theta_E V_E
    with V_E the column reaction (slab load inside the perimeter not deducted).

    Parameters
    ----------
    rho_ly, rho_lz : array-like
        Top (hogging) reinforcement ratios in y and z over the column strip width
        c + 3d each side, residual if corroded [-].
    concrete_strength_mpa : array-like
        In-situ compressive strength f_c [MPa].
    effective_depth_mm : array-like
        Mean effective depth d = (d_y + d_z)/2 [mm].
    column_c1_mm, column_c2_mm, column_diameter_mm, position
        Column geometry and position, see `control_perimeter`.
    coefficient : {"mean", "characteristic"} or float
        C in C k (100 rho_l f_c)^(1/3) (`PUNCHING_COEFFICIENTS`); pair it with
        ``assess.priors.resistance_model_uncertainty("punching", coefficient)``.
    beta : float, optional
        Eccentricity factor; default from `PUNCHING_BETA` by position
        (interior 1.15, edge 1.4, corner 1.5).
    keep_caps : bool
        Keep k <= 2, rho_l <= 0.02 and sigma_cp <= 0.2 f_c (default True, safe side).
    keep_v_min : bool
        Apply v_min = 0.035 k^(3/2) f_c^(1/2) (default False: design floor).
    axial_stress_mpa : array-like
        Mean in-plane compression (sigma_cy + sigma_cz)/2 [MPa]; adds 0.1 sigma_cp.

    Returns
    -------
    ndarray
        V_R [kN].

    Notes
    -----
    .. math::
        v_R = C k (100 \\rho_l f_c)^{1/3} + k_1 \\sigma_{cp},\\quad
        \\rho_l = \\sqrt{\\rho_{ly} \\rho_{lz}},\\quad
        V_R = v_R u_1 d / \\beta

    The crushing check at the column face (v_Rd,max, EN 1992-1-1 6.4.5(3)) is not
    included.
    """
    c = choose_coefficient(coefficient, PUNCHING_COEFFICIENTS, "punching")
    ry = as_array(rho_ly, "reinforcement ratio rho_ly", unit="-", allow_zero=True)
    rz = as_array(rho_lz, "reinforcement ratio rho_lz", unit="-", allow_zero=True)
    fc = as_array(concrete_strength_mpa, "concrete strength", unit="MPa")
    d = as_array(effective_depth_mm, "effective depth", unit="mm")
    u1 = control_perimeter(d, column_c1_mm=column_c1_mm, column_c2_mm=column_c2_mm,
                           column_diameter_mm=column_diameter_mm, position=position)
    factor = PUNCHING_BETA[position] if beta is None else beta
    if not float(factor) >= 1.0:
        raise InputError(f"punching eccentricity factor beta must be >= 1, got {factor!r}")
    sigma_cp = np.asarray(axial_stress_mpa, dtype=float)
    k = effective_depth_factor(d, keep_caps)
    rho = np.sqrt(ry * rz)
    if keep_caps:
        rho = np.minimum(rho, RHO_L_MAX)
        sigma_cp = np.minimum(sigma_cp, 0.2 * fc)
    v = c * k * np.cbrt(100.0 * rho * fc)
    if keep_v_min:
        v = np.maximum(v, minimum_shear_strength(fc, k))
    v = v + K1_PUNCHING * sigma_cp
    return v * u1 * d / float(factor) / 1000.0
