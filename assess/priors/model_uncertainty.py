"""Model-uncertainty factors theta for capacity formulas and load effects.

A capacity enters a limit state as theta_R * R(x) and a load effect as
theta_E * E(x) (multiplicative form, JCSS PMC Part 3.9).
"""

from __future__ import annotations

from assess.errors import InputError
from assess.priors.distribution import Prior

_JCSS = "JCSS PMC Part 3.9 (model uncertainties), table of recommended models"
_HRS = ("values for mean-value Eurocode formulas reported by Holicky, Retief & Sykora 2016, "
        "Prob. Eng. Mech. 45, and fib Bulletin 80 (2016) (from memory, exact numbers not confirmed)")

#: Model-uncertainty table: key -> (distribution, mean, CoV, source).
#: Resistance entries whose key starts with ``ec2_`` belong to the mean-value
#: EN 1992-1-1 formulas of `assess.limit_states`; ``jcss_`` entries are the generic
#: JCSS values. Load-effect entries start with ``load_``.
MODEL_UNCERTAINTY: dict[str, tuple[str, float, float, str]] = {
    # JCSS generic resistance models
    "jcss_rc_bending": ("lognormal", 1.2, 0.15, _JCSS + ": RC bending (incl. N and V)"),
    "jcss_rc_shear": ("lognormal", 1.4, 0.25, _JCSS + ": RC shear"),
    "jcss_rc_connections": ("lognormal", 1.0, 0.10, _JCSS + ": RC connections"),
    # Mean-value EN 1992-1-1 formulas. Bending: lower end of the quoted mean range
    # 1.0-1.1 with the upper end of the CoV range 0.05-0.10. Shear and punching with
    # the mean coefficient C_R,m = 0.23: unbiased, upper end of the quoted CoV range
    # 0.15-0.20. With the characteristic coefficient 0.18 the same scatter is kept and
    # the mean becomes 0.23/0.18 = 1.28 [computed] so both routes give the same capacity.
    "ec2_flexure_mean": ("lognormal", 1.0, 0.10, "stress-block flexure, " + _HRS),
    "ec2_shear_mean": ("lognormal", 1.0, 0.20, "EC2 6.2.2 with C_R,m = 0.23, " + _HRS),
    "ec2_shear_characteristic": ("lognormal", 0.23 / 0.18, 0.20,
                                 "EC2 6.2.2 with C = 0.18: mean 0.23/0.18, " + _HRS),
    "ec2_punching_mean": ("lognormal", 1.0, 0.20, "EC2 6.4.4 with C_R,m = 0.23, " + _HRS),
    "ec2_punching_characteristic": ("lognormal", 0.23 / 0.18, 0.20,
                                    "EC2 6.4.4 with C = 0.18: mean 0.23/0.18, " + _HRS),
    # JCSS load-effect models
    "load_frame_moment": ("lognormal", 1.0, 0.10, _JCSS + ": load effect, frames, moments"),
    "load_frame_axial": ("lognormal", 1.0, 0.05, _JCSS + ": load effect, frames, axial forces"),
    "load_frame_shear": ("lognormal", 1.0, 0.10, _JCSS + ": load effect, frames, shear forces"),
    "load_plate_moment": ("lognormal", 1.0, 0.20, _JCSS + ": load effect, plates, moments"),
    "load_plate_force": ("lognormal", 1.0, 0.10, _JCSS + ": load effect, plates, forces"),
}

#: Default theta for each capacity formula and coefficient choice. Each capacity
#: is paired with the theta calibrated for that very formula, so that bias is not
#: counted twice (JCSS shear 1.4 describes the ratio test/design-type formula).
DEFAULT_RESISTANCE_MODEL_UNCERTAINTY = {
    ("flexure", None): "ec2_flexure_mean",
    ("shear", "mean"): "ec2_shear_mean",
    ("shear", "characteristic"): "ec2_shear_characteristic",
    ("punching", "mean"): "ec2_punching_mean",
    ("punching", "characteristic"): "ec2_punching_characteristic",
}

#: Pairings that double-count the bias: JCSS shear theta (mean 1.4) on a formula
#: whose coefficient is already a mean value.
_FORBIDDEN = {("shear", "mean", "jcss_rc_shear"), ("punching", "mean", "jcss_rc_shear")}


def model_uncertainty_prior(key: str, *, table: dict | None = None) -> Prior:
    """Prior for the model-uncertainty factor ``key`` of `MODEL_UNCERTAINTY` [-]."""
    table = MODEL_UNCERTAINTY if table is None else table
    if key not in table:
        raise InputError(f"{key!r} is not a model-uncertainty entry; see "
                         f"assess.priors.MODEL_UNCERTAINTY for names: {sorted(table)}")
    kind, mean, cov, source = table[key]
    return Prior(kind, mean, cov * mean, source=source, unit="-")


def resistance_model_uncertainty(formula: str, coefficient: str | None = None, *,
                                 key: str | None = None) -> Prior:
    """Model-uncertainty factor theta_R matching a capacity formula [-].

    Parameters
    ----------
    formula : str
        ``"flexure"``, ``"shear"`` or ``"punching"``.
    coefficient : str, optional
        For shear and punching: ``"mean"`` (C_R,m = 0.23) or ``"characteristic"``
        (0.18); the coefficient choice of the capacity function.
    key : str, optional
        Use this `MODEL_UNCERTAINTY` entry instead of the default; pairings that
        count the bias twice (JCSS shear theta with a mean coefficient) are refused.
    """
    coef = None if formula == "flexure" else (coefficient or "mean")
    if key is None:
        if (formula, coef) not in DEFAULT_RESISTANCE_MODEL_UNCERTAINTY:
            raise InputError(
                f"no default model uncertainty for formula {formula!r} with coefficient "
                f"{coefficient!r}; known: {sorted(DEFAULT_RESISTANCE_MODEL_UNCERTAINTY, key=str)}. "
                "For a numeric coefficient choose the theta entry explicitly with key=...")
        key = DEFAULT_RESISTANCE_MODEL_UNCERTAINTY[(formula, coef)]
    check_model_uncertainty_pairing(formula, coef, key)
    return model_uncertainty_prior(key)


def check_model_uncertainty_pairing(formula: str, coefficient: str | None, key: str) -> None:
    """Refuse theta models that count the formula's bias twice (raises InputError)."""
    if (formula, coefficient, key) in _FORBIDDEN:
        raise InputError(
            f"model uncertainty {key!r} (JCSS, mean 1.4) describes the bias of a design-type "
            f"{formula} formula; the capacity already uses the mean coefficient C_R,m, so the "
            f"bias would be counted twice. Use 'ec2_{formula}_mean', or the characteristic "
            "coefficient 0.18 with the JCSS factor.")
