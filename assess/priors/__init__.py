"""Documented prior models from design information (JCSS PMC, Eurocodes).

Every table is a module-level dict naming its source; every function returns a
small dataclass (`Prior` or `NormalGamma`) carrying its source string.
"""

from assess.priors.actions import (
                                   IMPOSED_LOAD_CATEGORIES,
                                   IMPOSED_LOAD_MODELS,
                                   UNIT_WEIGHT_COV,
                                   UNIT_WEIGHT_RC,
                                   gumbel_period_shift,
                                   imposed_load_prior,
                                   self_weight_prior,
                                   superimposed_dead_prior,
)
from assess.priors.characteristic import (
                                   CHARACTERISTIC_VALUES,
                                   looks_characteristic,
                                   warn_if_characteristic,
)
from assess.priors.concrete import CONCRETE_PRIORS, concrete_prior, parse_concrete_class
from assess.priors.distribution import Prior
from assess.priors.geometry import (
                                   COVER_DEVIATIONS,
                                   cover_prior,
                                   dimension_deviation,
                                   section_dimension_prior,
)
from assess.priors.model_uncertainty import (
                                   DEFAULT_RESISTANCE_MODEL_UNCERTAINTY,
                                   MODEL_UNCERTAINTY,
                                   check_model_uncertainty_pairing,
                                   model_uncertainty_prior,
                                   resistance_model_uncertainty,
)
from assess.priors.normal_gamma import (
                                   NormalGamma,
                                   predictive_cdf,
                                   predictive_lognormal,
                                   predictive_quantile,
                                   update_normal_gamma,
                                   update_normal_gamma_summary,
)
from assess.priors.steel import bar_area_prior, parse_steel_grade, steel_yield_prior

__all__ = [
    "Prior", "NormalGamma",
    "CONCRETE_PRIORS", "concrete_prior", "parse_concrete_class",
    "update_normal_gamma", "update_normal_gamma_summary", "predictive_quantile",
    "predictive_cdf", "predictive_lognormal",
    "steel_yield_prior", "parse_steel_grade", "bar_area_prior",
    "COVER_DEVIATIONS", "cover_prior", "dimension_deviation", "section_dimension_prior",
    "UNIT_WEIGHT_RC", "UNIT_WEIGHT_COV", "IMPOSED_LOAD_CATEGORIES", "IMPOSED_LOAD_MODELS",
    "self_weight_prior", "superimposed_dead_prior", "imposed_load_prior", "gumbel_period_shift",
    "MODEL_UNCERTAINTY", "DEFAULT_RESISTANCE_MODEL_UNCERTAINTY", "model_uncertainty_prior",
    "resistance_model_uncertainty", "check_model_uncertainty_pairing",
    "CHARACTERISTIC_VALUES", "looks_characteristic", "warn_if_characteristic",
]
