"""Drilled cores: failure load -> strength, and core strength -> in-situ strength.

The in-situ strength is the core strength multiplied by a chain of factors,
each a documented, switchable choice:

    f_is = f_core * F_l/d * F_dia * F_mc * F_d

- F_l/d, length/diameter: brings the core to an equivalent l/d = 2 cylinder.
  ``"ASTM C42"``: ASTM C42/C42M correction factors 1.75 -> 0.98, 1.50 -> 0.96,
  1.25 -> 0.93, 1.00 -> 0.87 (from memory), linear interpolation, 1.00 at
  l/d >= 2 (ASTM asks for trimming above 2.1), held at 0.87 below 1.
- F_dia, core diameter: ``"Bartlett & MacGregor 1994"``: 50 mm 1.06, 100 mm
  1.00, 150 mm 0.98 (from memory), linear interpolation, held outside.
- F_mc, moisture condition at test: ``"Bartlett & MacGregor 1994"``: as-received
  (sealed) 1.00, soaked 1.09, air-dried 0.96 (from memory).
- F_d, damage from drilling: ``"Bartlett & MacGregor 1994"``: 1.06 (from memory).

Every factor can be switched off with ``"none"`` (factor 1). The drilling
direction is recorded but not corrected for.

References
----------
.. [1] ASTM C42/C42M, "Standard Test Method for Obtaining and Testing Drilled
   Cores and Sawed Beams of Concrete", ASTM International.
.. [2] F. M. Bartlett and J. G. MacGregor, "Effect of core diameter on concrete
   core strengths" and "Effect of moisture condition on concrete core
   strengths", ACI Materials Journal, 91(3), 1994.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

import numpy as np

from inspection_io.errors import InputError

__all__ = [
    "LD_FACTORS", "DIAMETER_FACTORS", "MOISTURE_FACTORS", "DRILLING_DAMAGE_FACTORS",
    "CoreCorrections", "strength_from_failure_load", "length_diameter_factor",
    "diameter_factor", "moisture_factor", "drilling_damage_factor", "insitu_strength",
]

ASTM_C42 = "ASTM C42"
BARTLETT_MACGREGOR = "Bartlett & MacGregor 1994"
NONE = "none"

#: l/d -> factor to an l/d = 2 cylinder, per method (ASTM C42/C42M, from memory).
LD_FACTORS = {ASTM_C42: ((1.00, 0.87), (1.25, 0.93), (1.50, 0.96), (1.75, 0.98), (2.00, 1.00))}
#: core diameter [mm] -> factor to a 100 mm core (Bartlett & MacGregor 1994, from memory).
DIAMETER_FACTORS = {BARTLETT_MACGREGOR: ((50.0, 1.06), (100.0, 1.00), (150.0, 0.98))}
#: moisture condition at test -> factor to the in-situ condition (B&M 1994, from memory).
MOISTURE_FACTORS = {BARTLETT_MACGREGOR: {"as-received": 1.00, "soaked": 1.09, "dry": 0.96}}
#: factor for damage done by drilling (Bartlett & MacGregor 1994, from memory).
DRILLING_DAMAGE_FACTORS = {BARTLETT_MACGREGOR: 1.06}


@dataclass(frozen=True)
class CoreCorrections:
    """Which published factor set to use for each correction (``"none"`` = 1.0).

    Attributes
    ----------
    length_diameter : str
        ``"ASTM C42"`` or ``"none"``.
    diameter : str
        ``"Bartlett & MacGregor 1994"`` or ``"none"``.
    moisture : str
        ``"Bartlett & MacGregor 1994"`` or ``"none"``.
    drilling_damage : str
        ``"Bartlett & MacGregor 1994"`` or ``"none"``.
    """

    length_diameter: str = ASTM_C42
    diameter: str = BARTLETT_MACGREGOR
    moisture: str = BARTLETT_MACGREGOR
    drilling_damage: str = BARTLETT_MACGREGOR

    def __post_init__(self):
        for name, table in (("length_diameter", LD_FACTORS), ("diameter", DIAMETER_FACTORS),
                            ("moisture", MOISTURE_FACTORS),
                            ("drilling_damage", DRILLING_DAMAGE_FACTORS)):
            _check_method(getattr(self, name), table, f"core_corrections.{name}")

    def to_dict(self) -> dict:
        return asdict(self)


def _check_method(method: str, table: dict, key: str) -> None:
    if method != NONE and method not in table:
        choices = ", ".join(repr(m) for m in (*table, NONE))
        raise InputError(f"unknown correction method {method!r}; choose one of {choices}",
                         column=key)


def strength_from_failure_load(failure_load, diameter):
    """Compressive strength of a core from its failure load: f = 4 F / (pi d^2).

    Parameters
    ----------
    failure_load : float or array_like
        Maximum load at failure [kN].
    diameter : float or array_like
        Core diameter [mm].

    Returns
    -------
    float or ndarray
        Strength as tested [MPa].
    """
    return 4.0 * 1000.0 * np.asarray(failure_load, float) / (math.pi * np.asarray(diameter, float) ** 2)


def length_diameter_factor(length_to_diameter, method: str = ASTM_C42):
    """Factor that converts the strength of a core of ratio l/d to l/d = 2 [-]."""
    _check_method(method, LD_FACTORS, "core_corrections.length_diameter")
    ratio = np.asarray(length_to_diameter, float)
    if method == NONE:
        return np.ones_like(ratio)
    points, factors = zip(*LD_FACTORS[method])
    return np.interp(ratio, points, factors)


def diameter_factor(diameter, method: str = BARTLETT_MACGREGOR):
    """Factor that converts the strength of a core of `diameter` [mm] to a 100 mm core [-]."""
    _check_method(method, DIAMETER_FACTORS, "core_corrections.diameter")
    diameter = np.asarray(diameter, float)
    if method == NONE:
        return np.ones_like(diameter)
    points, factors = zip(*DIAMETER_FACTORS[method])
    return np.interp(diameter, points, factors)


def moisture_factor(condition: str, method: str = BARTLETT_MACGREGOR) -> float:
    """Factor for the moisture condition at test (``as-received``, ``dry``, ``soaked``) [-]."""
    _check_method(method, MOISTURE_FACTORS, "core_corrections.moisture")
    if method == NONE:
        return 1.0
    table = MOISTURE_FACTORS[method]
    if condition not in table:
        raise InputError(f"unknown moisture condition {condition!r}; choose one of "
                         f"{', '.join(table)}", column="moisture")
    return table[condition]


def drilling_damage_factor(method: str = BARTLETT_MACGREGOR) -> float:
    """Factor for damage done to the core by drilling [-]."""
    _check_method(method, DRILLING_DAMAGE_FACTORS, "core_corrections.drilling_damage")
    return 1.0 if method == NONE else DRILLING_DAMAGE_FACTORS[method]


def insitu_strength(core_strength: float, diameter: float, length: float,
                    moisture: str = "as-received",
                    corrections: CoreCorrections | None = None) -> tuple[float, dict]:
    """In-situ strength of one core, equivalent to a 2:1 cylinder in the structure.

    Parameters
    ----------
    core_strength : float
        Strength as tested [MPa].
    diameter, length : float
        Core diameter and tested length [mm].
    moisture : str
        Moisture condition at test: ``as-received``, ``dry`` or ``soaked``.
    corrections : CoreCorrections, optional
        Factor sets; default all on (see module notes).

    Returns
    -------
    strength : float
        In-situ strength [MPa].
    factors : dict
        ``length_to_diameter`` and each factor applied (``factor_l_d``,
        ``factor_diameter``, ``factor_moisture``, ``factor_drilling_damage``),
        plus the method names, for the observation's extra fields.
    """
    corrections = corrections or CoreCorrections()
    ratio = length / diameter
    factors = {
        "length_to_diameter": ratio,
        "factor_l_d": float(length_diameter_factor(ratio, corrections.length_diameter)),
        "factor_diameter": float(diameter_factor(diameter, corrections.diameter)),
        "factor_moisture": moisture_factor(moisture, corrections.moisture),
        "factor_drilling_damage": drilling_damage_factor(corrections.drilling_damage),
    }
    product = math.prod(v for k, v in factors.items() if k.startswith("factor_"))
    factors["correction_methods"] = corrections.to_dict()
    return core_strength * product, factors
