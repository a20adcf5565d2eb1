"""Priors for reinforcing steel: yield strength and (residual) bar area.

Source: JCSS Probabilistic Model Code, Part 3.2 "Static properties of reinforcing steel".
"""

from __future__ import annotations

import re

from assess.errors import InputError
from assess.priors.distribution import Prior

#: Overall standard deviation of the yield strength [MPa]: mill-to-mill 19,
#: batch-to-batch 22, within-melt 8 MPa combine to sqrt(19^2 + 22^2 + 8^2) = 30.1
#: (JCSS PMC 3.2).
YIELD_STD_MPA = 30.0

#: Coefficient of variation of the bar cross-section area (JCSS PMC 3.2 table) [-].
BAR_AREA_COV = 0.02


def parse_steel_grade(grade) -> float:
    """Nominal yield strength from a grade: ``"B500"``, ``"B500B"``, ``"S410"``, ``500`` [MPa]."""
    if isinstance(grade, (int, float)) and not isinstance(grade, bool):
        value = float(grade)
    else:
        match = re.search(r"(\d{3,4})", str(grade))
        if not match:
            raise InputError(
                f"steel grade must contain the nominal yield strength in MPa, e.g. 'B500' or "
                f"'S410'; got {grade!r}")
        value = float(match.group(1))
    if not 200.0 <= value <= 1000.0:
        raise InputError(f"nominal yield strength {value:g} MPa from grade {grade!r} is outside "
                         "the plausible range 200-1000 MPa for reinforcing steel")
    return value


def steel_yield_prior(grade, *, std_mpa: float = YIELD_STD_MPA) -> Prior:
    """Normal prior for the yield strength f_y [MPa].

    Mean = nominal + 2 sigma, sigma = 30 MPa (JCSS PMC 3.2, controlled production);
    e.g. B500 -> mean 560 MPa, CoV 0.054. The JCSS diameter dependence of the mean
    is not applied.
    """
    nominal = parse_steel_grade(grade)
    return Prior("normal", nominal + 2.0 * std_mpa, std_mpa,
                 source="JCSS PMC Part 3.2: mean = nominal + 2 sigma, sigma = 30 MPa, normal",
                 unit="MPa", note=f"nominal {nominal:g} MPa from grade {grade!r}")


def bar_area_prior(cov: float = BAR_AREA_COV) -> Prior:
    """Normal prior for the ratio residual/nominal bar area before inspection [-].

    Mean 1 (no section loss assumed before inspection) with the JCSS PMC 3.2 bar
    area CoV 0.02. Section loss from corrosion models or break-out measurements
    replaces this prior.
    """
    return Prior("normal", 1.0, cov, unit="-",
                 source="JCSS PMC Part 3.2: bar area mean = nominal, CoV 0.02, normal",
                 note="no section loss before inspection")
