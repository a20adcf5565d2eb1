"""Units of campaign-file columns and their conversion to canonical units.

Every measured column of a campaign file states its unit in square brackets
(``diameter [mm]``). This module knows, per physical dimension, which unit
spellings are accepted, which unit is canonical, and how to convert.

Conversion factors
------------------
- inch = 25.4 mm exactly (international yard and pound agreement, 1959).
- pound-force = 4.4482216152605 N exactly (standard gravity 9.80665 m/s2 times
  the international pound 0.45359237 kg); psi = lbf/in2 = 6.894757... kPa.
- Half-cell potentials are converted to the copper/copper-sulfate electrode
  (CSE) with the standard potentials of the reference electrodes against the
  standard hydrogen electrode at 25 degC: CSE +316 mV, saturated calomel (SCE)
  +241 mV, silver/silver-chloride in saturated KCl +197 mV (common practice).
  Hence E_CSE = E_SCE - 75 mV and E_CSE = E_Ag/AgCl - 119 mV.
- Chloride by mass of cement is taken equal to chloride by mass of binder
  (the binder of the contract is the cement content, common practice); by mass
  of concrete it is multiplied by ``concrete_density / binder_content``.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

__all__ = [
    "DIMENSIONS", "ELECTRODE_POTENTIALS_SHE", "Unit", "UnitError",
    "normalise_unit", "lookup_unit", "accepted_units", "canonical_label", "to_canonical",
    "electrode_offset_to_cse", "chloride_concrete_to_binder",
]

INCH_MM = 25.4
LBF_N = 4.4482216152605
PSI_MPA = LBF_N / INCH_MM**2

#: Standard potentials of reference electrodes vs the standard hydrogen
#: electrode at 25 degC [mV] (common practice).
ELECTRODE_POTENTIALS_SHE = {"CSE": 316.0, "SCE": 241.0, "Ag/AgCl": 197.0}


@dataclass(frozen=True)
class Unit:
    """One accepted unit: ``canonical = value * factor + offset``.

    Attributes
    ----------
    label : str
        How the unit is written in reports (``"mV SCE"``).
    factor : float
        Multiplier to the canonical unit [-].
    offset : float
        Added after multiplying, in the canonical unit (electrode shifts).
    needs_binder : bool
        True for chloride by mass of concrete (needs the site's binder content
        and concrete density).
    """

    label: str
    factor: float = 1.0
    offset: float = 0.0
    needs_binder: bool = False


class UnitError(ValueError):
    """A unit that the dimension does not accept; the message lists the accepted ones."""


def _potentials() -> dict[str, Unit]:
    table = {}
    aliases = {"CSE": ("cse", "cu/cuso4"), "SCE": ("sce",), "Ag/AgCl": ("ag/agcl",)}
    for electrode, keys in aliases.items():
        offset = electrode_offset_to_cse(electrode)
        for key in keys:
            table[f"mv {key}"] = Unit(f"mV {electrode}", 1.0, offset)
            table[f"v {key}"] = Unit(f"V {electrode}", 1000.0, offset)
    return table


def electrode_offset_to_cse(electrode: str) -> float:
    """Shift that converts a potential read against `electrode` to CSE [mV].

    E_CSE = E_electrode + (E0_electrode - E0_CSE), standard potentials vs SHE
    from `ELECTRODE_POTENTIALS_SHE` (common practice): SCE -75 mV, Ag/AgCl -119 mV.
    """
    return ELECTRODE_POTENTIALS_SHE[electrode] - ELECTRODE_POTENTIALS_SHE["CSE"]


#: Accepted units per dimension; the first entry is the canonical unit.
DIMENSIONS: dict[str, dict[str, Unit]] = {
    "length": {"mm": Unit("mm"), "cm": Unit("cm", 10.0), "in": Unit("in", INCH_MM)},
    "length_metric": {"mm": Unit("mm"), "cm": Unit("cm", 10.0)},
    "length_mm": {"mm": Unit("mm")},
    "stress": {"mpa": Unit("MPa"), "n/mm2": Unit("N/mm2"), "psi": Unit("psi", PSI_MPA),
               "ksi": Unit("ksi", 1000.0 * PSI_MPA)},
    "stress_metric_ksi": {"mpa": Unit("MPa"), "n/mm2": Unit("N/mm2"),
                          "ksi": Unit("ksi", 1000.0 * PSI_MPA)},
    "force": {"kn": Unit("kN"), "n": Unit("N", 1e-3), "lbf": Unit("lbf", LBF_N * 1e-3)},
    "percent": {"%": Unit("%")},
    "chloride": {"% binder": Unit("% binder"), "% cement": Unit("% cement"),
                 "% concrete": Unit("% concrete", needs_binder=True)},
    "potential": _potentials(),
    "position": {"m": Unit("m"), "mm": Unit("mm", 1e-3)},
}

_CANONICAL_LABEL = {"length": "mm", "length_metric": "mm", "length_mm": "mm", "stress": "MPa",
                    "stress_metric_ksi": "MPa", "force": "kN", "percent": "%",
                    "chloride": "% binder", "potential": "mV CSE", "position": "m"}


def normalise_unit(text: str) -> str:
    """Lower-case a unit, unify spacing and superscripts: ``' N/mm² '`` -> ``'n/mm2'``.

    ``"mV vs SCE"`` and ``"% by mass of binder"`` are read as ``"mv sce"`` and
    ``"% binder"``.
    """
    unit = text.strip().lower().replace("²", "2").replace("^2", "2")
    unit = re.sub(r"\s+", " ", unit)
    unit = re.sub(r"\s*/\s*", "/", unit)
    unit = re.sub(r"\bvs\.?\s+", "", unit)
    unit = re.sub(r"%\s*(by mass of|by weight of|of|by)?\s*", "% ", unit).strip()
    return unit


def accepted_units(dimension: str) -> list[str]:
    """Labels of the units a dimension accepts, canonical first."""
    labels = []
    for unit in DIMENSIONS[dimension].values():
        if unit.label not in labels:
            labels.append(unit.label)
    return labels


def lookup_unit(text: str, dimension: str) -> Unit:
    """Return the `Unit` for `text` in `dimension` or raise `UnitError` listing accepted ones."""
    key = normalise_unit(text)
    unit = DIMENSIONS[dimension].get(key)
    if unit is not None:
        return unit
    accepted = ", ".join(accepted_units(dimension))
    if dimension == "potential":
        scale, _, electrode = key.partition(" ")
        if scale in ("mv", "v") and not electrode:
            raise UnitError(f"unit '{text}' does not name the reference electrode; "
                            f"accepted: {accepted}")
        if scale in ("mv", "v"):
            raise UnitError(f"unknown or unsupported reference electrode '{text.split(None, 1)[1]}'"
                            f"; accepted: {accepted}")
    raise UnitError(f"unknown unit '{text}'; accepted: {accepted}")


def canonical_label(dimension: str) -> str:
    """Canonical unit label of a dimension (``"mm"``, ``"MPa"``, ``"mV CSE"`` ...)."""
    return _CANONICAL_LABEL[dimension]


def to_canonical(value: float, unit: Unit) -> float:
    """Convert one value to the canonical unit of its dimension."""
    return value * unit.factor + unit.offset


def chloride_concrete_to_binder(percent_concrete: float, concrete_density: float,
                                binder_content: float) -> float:
    """Chloride by mass of concrete -> by mass of binder [%].

    Parameters
    ----------
    percent_concrete : float
        Chloride content by mass of concrete [%].
    concrete_density : float
        Density of the concrete [kg/m3].
    binder_content : float
        Binder (cement) content [kg/m3].

    Returns
    -------
    float
        Chloride content by mass of binder [%]: ``percent_concrete * density / binder``.
    """
    return percent_concrete * concrete_density / binder_content
