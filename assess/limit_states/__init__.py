"""Vectorised capacity and load-effect models for RC members (mean-value EN 1992-1-1 forms).

Each function takes numpy arrays (one entry per sample, broadcasting) and returns
an array; a limit state is built as ``g = theta_R * R(x) - theta_E * E(x)``, with
the model uncertainties from `assess.priors.MODEL_UNCERTAINTY`.
"""

from assess.limit_states.flexure import (
                                         FlexureDetails,
                                         balanced_x_over_d,
                                         flexural_capacity,
                                         flexural_capacity_details,
                                         neutral_axis_ratio,
)
from assess.limit_states.load_effects import (
                                         LOAD_EFFECT_MODEL_UNCERTAINTY_KEY,
                                         TRIBUTARY_SHARE,
                                         OneWayLoadEffects,
                                         column_reaction,
                                         line_load,
                                         load_effect_model_uncertainty,
                                         one_way_load_effects,
                                         self_weight_area_load,
                                         simply_supported_moment,
                                         simply_supported_shear,
)
from assess.limit_states.punching import (
                                         PUNCHING_BETA,
                                         PUNCHING_COEFFICIENTS,
                                         control_perimeter,
                                         punching_capacity,
                                         reinforcement_ratio,
)
from assess.limit_states.shear import SHEAR_COEFFICIENTS, minimum_shear_strength, shear_capacity
from assess.priors.model_uncertainty import MODEL_UNCERTAINTY, resistance_model_uncertainty

__all__ = [
    "flexural_capacity", "flexural_capacity_details", "FlexureDetails", "neutral_axis_ratio",
    "balanced_x_over_d",
    "shear_capacity", "SHEAR_COEFFICIENTS", "minimum_shear_strength",
    "punching_capacity", "control_perimeter", "reinforcement_ratio", "PUNCHING_BETA",
    "PUNCHING_COEFFICIENTS",
    "self_weight_area_load", "line_load", "simply_supported_moment", "simply_supported_shear",
    "column_reaction", "one_way_load_effects", "OneWayLoadEffects", "TRIBUTARY_SHARE",
    "load_effect_model_uncertainty", "LOAD_EFFECT_MODEL_UNCERTAINTY_KEY",
    "MODEL_UNCERTAINTY", "resistance_model_uncertainty",
]
