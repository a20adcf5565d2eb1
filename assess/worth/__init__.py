"""Is more testing worth it? Value of information for candidate test programmes.

- `decision`: alternatives, costs, discounting, expected cost given pf per draw.
- `programmes`: candidate test programmes (cores, break-outs, direct measurement,
  half-cell survey, custom): simulate outcomes, evaluate their likelihood.
- `preposterior`: importance re-weighting of the current draws, EVSI, EVPI,
  probability that the test shows the structure adequate, ranking.
- `closed_form`: Raiffa & Schlaifer two-action linear-loss EVSI / EVPI.

Decision support only: results depend on the inputs; licensed engineers decide.
"""

from assess.worth.closed_form import (
                                      TwoActionLinearLoss,
                                      posterior_sd,
                                      preposterior_sd,
                                      unit_normal_loss,
)
from assess.worth.decision import Alternative, DecisionProblem, discount_factors, expected_cost
from assess.worth.preposterior import (
                                      LowEffectiveSampleSizeWarning,
                                      ProgrammeRanking,
                                      WorthAboveBoundWarning,
                                      WorthResult,
                                      check_evsi_below_evpi,
                                      posterior_weights,
                                      rank_programmes,
                                      recommendation_text,
                                      value_of_information,
)
from assess.worth.programmes import (
                                      BreakoutSurvey,
                                      CoreSampling,
                                      CustomProgramme,
                                      DirectMeasurement,
                                      HalfCellSurvey,
                                      Programme,
                                      summarise_readings,
)

__all__ = [
    "Alternative", "BreakoutSurvey", "CoreSampling", "CustomProgramme", "DecisionProblem",
    "DirectMeasurement", "HalfCellSurvey", "LowEffectiveSampleSizeWarning", "Programme",
    "ProgrammeRanking", "TwoActionLinearLoss", "WorthAboveBoundWarning", "WorthResult",
    "check_evsi_below_evpi", "discount_factors",
    "expected_cost", "posterior_sd", "posterior_weights", "preposterior_sd",
    "rank_programmes", "recommendation_text", "summarise_readings", "unit_normal_loss",
    "value_of_information",
]
