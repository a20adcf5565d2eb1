"""Deterioration of reinforced concrete: initiation and propagation of corrosion.

Pure, vectorised numpy functions (every argument broadcasts, so one call
evaluates a whole sample), grouped by physical process:

- `chloride`: fib Bulletin 34 error-function chloride ingress and its inverse.
- `carbonation`: square-root-of-time carbonation and the fib 34 form.
- `initiation`: random initiation times and the probability of initiation.
- `corrosion`: Faraday penetration, uniform loss, pitting (Val & Melchers),
  Vu & Stewart time-variant rate, residual bar area.
- `halfcell`: ASTM C876 bands and Bayesian use of half-cell potentials.
- `defaults`: documented parameter tables with their sources.

Canonical units: depth/cover/diameter [mm], time [yr], diffusion [mm2/yr],
chloride [% by mass of binder], corrosion rate [uA/cm2], potential [mV vs CSE].
"""

from assess.deterioration.carbonation import (
                                              carbonation_depth,
                                              carbonation_rate_from_depth,
                                              fib34_carbonation_depth,
                                              fib34_carbonation_rate,
                                              fib34_initiation_time,
)
from assess.deterioration.carbonation import initiation_time as carbonation_initiation_time
from assess.deterioration.chloride import (
                                              apparent_diffusion_coefficient,
                                              chloride_content,
                                              m2_per_s_to_mm2_per_year,
                                              temperature_factor,
)
from assess.deterioration.chloride import initiation_time as chloride_initiation_time
from assess.deterioration.corrosion import (
                                              FARADAY_MM_PER_YEAR_PER_UA_CM2,
                                              penetration_depth,
                                              pit_area,
                                              pit_depth,
                                              pitting_factor_distribution,
                                              residual_area_ratio,
                                              residual_bar_area,
                                              sample_pitting_factor,
                                              time_since_initiation,
                                              uniform_residual_diameter,
                                              vu_stewart_corrosion_rate,
                                              vu_stewart_initial_rate,
                                              vu_stewart_penetration,
)
from assess.deterioration.defaults import DistributionSpec
from assess.deterioration.halfcell import (
                                              astm_c876_class,
                                              detection_probabilities,
                                              posterior_active_probability,
                                              posterior_from_indication,
                                              potential_likelihood,
                                              potential_log_likelihood,
)
from assess.deterioration.initiation import (
                                              InitiationProbability,
                                              first_crossing_time,
                                              initiation_probability,
                                              sample_initiation_times,
)

__all__ = [
    "DistributionSpec", "FARADAY_MM_PER_YEAR_PER_UA_CM2", "InitiationProbability",
    "apparent_diffusion_coefficient", "astm_c876_class", "carbonation_depth",
    "carbonation_initiation_time", "carbonation_rate_from_depth", "chloride_content",
    "chloride_initiation_time", "detection_probabilities", "fib34_carbonation_depth",
    "fib34_carbonation_rate", "fib34_initiation_time", "first_crossing_time",
    "initiation_probability", "m2_per_s_to_mm2_per_year", "penetration_depth", "pit_area",
    "pit_depth", "pitting_factor_distribution", "posterior_active_probability",
    "posterior_from_indication", "potential_likelihood", "potential_log_likelihood",
    "residual_area_ratio", "residual_bar_area", "sample_initiation_times",
    "sample_pitting_factor", "temperature_factor", "time_since_initiation",
    "uniform_residual_diameter", "vu_stewart_corrosion_rate", "vu_stewart_initial_rate",
    "vu_stewart_penetration",
]
