"""Reliability assessment of existing reinforced-concrete structures.

Decision support only: results are only as good as the inputs; local codes and
licensed engineers decide.
"""

__version__ = "0.1.0"
