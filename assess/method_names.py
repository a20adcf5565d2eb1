"""Names of the reliability methods, without importing them (the command line's choices).

`assess.reliability.dispatch.METHODS` holds the functions under the same names, in the same
order (checked there on import).
"""

METHOD_NAMES = (
    "auto",
    "form",
    "sorm",
    "importance_sampling",
    "cross_entropy",
    "subset_simulation",
    "crude_monte_carlo",
    "polynomial_chaos",
)
"""Valid ``method`` values of `assess.reliability.run_method`."""

__all__ = ["METHOD_NAMES"]
