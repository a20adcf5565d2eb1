"""Plausibility ranges of every measured quantity a campaign-file reader accepts.

Each quantity has two ranges in its canonical unit:

- the **hard range**: outside it the value cannot be a measurement of a
  reinforced-concrete structure (a typing or unit mistake: 900 MPa concrete,
  5000 mm cover, +5000 mV CSE). The row is refused with file, row, column and
  the range (`InputError`).
- the **soft range**: inside the hard range but outside the soft one the value
  is possible but unusual. The row is kept and its observations get the flag
  ``unusual <quantity>`` (`Plausible.flag`); summaries leave flagged rows out
  unless the engineer includes them (`inspection_io.screening.usable_mask`).

The ranges are judgement, stated beside each with its basis: "common practice"
where it is a fact of the trade with no single source, a standard where one
bounds the quantity ("(from memory)" where recalled, not read).

Flagged rows are left out of summaries unless included, so a soft bound on the
unsafe side (low strength, low cover, high chloride, deep carbonation, very
negative potential) drops real bad news: those bounds sit where a value is far
more likely a typing or unit mistake than a measurement, and a zero cover is
not flagged at all.

`within_member_depth` is the cross-check of a depth-like measurement (cover,
carbonation depth, chloride increment) against the member's overall depth from
the site file.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = [
    "FLAGS",
    "MAX_REINFORCEMENT_RATIO",
    "RANGES",
    "Plausible",
    "check",
    "hard_message",
    "within_member_depth",
]


@dataclass(frozen=True)
class Plausible:
    """Hard and soft ranges of one quantity (canonical unit), closed intervals.

    Attributes
    ----------
    quantity : str
        Key (``"core_strength"``, ``"cover"`` ...).
    label : str
        Words for messages (``"core strength"``).
    unit : str
        Canonical unit of the ranges (``"MPa"``, ``"mm"``, ``"mV CSE"`` ...).
    hard : (float, float)
        Outside: refused.
    soft : (float, float)
        Outside (but inside `hard`): kept and flagged.
    source : str
        Basis of the ranges.
    """

    quantity: str
    label: str
    unit: str
    hard: tuple[float, float]
    soft: tuple[float, float]
    source: str

    @property
    def flag(self) -> str:
        """Screening flag of a value outside the soft range: ``"unusual core strength"``."""
        return f"unusual {self.label}"

    def reason(self) -> str:
        """Why the flag is set, for `inspection_io.screening.FLAG_REASONS`."""
        return (f"{self.label} outside the usual {_interval(self.soft)} {self.unit} "
                f"({self.source})")


def _interval(bounds: tuple[float, float]) -> str:
    return f"{bounds[0]:g} to {bounds[1]:g}"


_CONCRETE = ("common practice: cores of structural concrete test at 10-100 MPa; EN 206 "
             "Table 12 classes run from C8/10 to C100/115 (from memory); no intact core below "
             "1 MPa, ultra-high-performance concrete about 200 MPa")
_BAR = ("EN 10080 / BS 4449 nominal bar sizes 6-50 mm, ASTM A615 #3-#18 = 9.5-57.3 mm "
        "(from memory); common practice")
_STEEL = ("common practice: historic mild steel yields at about 250 MPa, B500 bars at "
          "500-650 MPa (EN 10080 / EN 1992-1-1 Annex C, from memory); rebar never yields "
          "above 1000 MPa")

#: The table of ranges, one entry per quantity (canonical units).
RANGES: dict[str, Plausible] = {r.quantity: r for r in (
    Plausible("core_strength", "core strength", "MPa", (1.0, 250.0), (5.0, 120.0), _CONCRETE),
    Plausible("core_diameter", "core diameter", "mm", (20.0, 500.0), (25.0, 200.0),
              "common practice: cores are drilled at 25-150 mm (EN 12504-1 and EN 13791 take "
              "50-150 mm, from memory)"),
    Plausible("core_length", "core length", "mm", (10.0, 1000.0), (25.0, 400.0),
              "common practice: tested length about 1-2 core diameters (ASTM C42, from memory)"),
    Plausible("failure_load", "failure load", "kN", (0.05, 20000.0), (5.0, 5000.0),
              "common practice: a 150 mm core at 250 MPa fails at 4400 kN; the strength from "
              "the load is checked as core strength"),
    Plausible("grid_coordinate", "grid coordinate", "m", (-10000.0, 10000.0),
              (-1000.0, 1000.0),
              "common practice: a survey grid lies on one structure, a few hundred metres at "
              "most from its origin"),
    Plausible("cover", "cover", "mm", (0.0, 300.0), (0.0, 120.0),
              "common practice: nominal covers 15-75 mm (EN 1992-1-1 4.4.1, from memory); "
              "cover meters read to about 150-200 mm; a zero cover (bar exposed at a spall) is "
              "a real and important finding, not flagged"),
    Plausible("carbonation_depth", "carbonation depth", "mm", (0.0, 300.0), (0.0, 80.0),
              "common practice: d = k sqrt(t) with k rarely above 8 mm/sqrt(yr) gives under "
              "80 mm in 100 years"),
    Plausible("chloride", "chloride content", "% binder", (0.0, 15.0), (0.0, 6.0),
              "common practice: surface contents of salt-splashed concrete reach 3-6 % by mass "
              "of binder (fib Bulletin 34, from memory); 15 % binder is about 2 % by mass of "
              "concrete"),
    Plausible("chloride_depth", "chloride increment depth", "mm", (0.0, 300.0), (0.0, 150.0),
              "common practice: chloride profiles are ground to 50-100 mm depth"),
    Plausible("potential", "half-cell potential", "mV CSE", (-1500.0, 500.0), (-900.0, 200.0),
              "common practice: field readings lie between about +100 and -800 mV CSE; ASTM "
              "C876 interprets -200 and -350 mV CSE (from memory)"),
    Plausible("bar_diameter", "bar diameter", "mm", (3.0, 60.0), (6.0, 50.0), _BAR),
    Plausible("residual_diameter", "residual bar diameter", "mm", (0.0, 60.0), (0.0, 60.0),
              _BAR + "; never above the original diameter"),
    Plausible("pit_depth", "pit depth", "mm", (0.0, 60.0), (0.0, 30.0),
              "bounded by the bar diameter (" + _BAR + ")"),
    Plausible("yield_strength", "yield strength", "MPa", (150.0, 1000.0), (220.0, 750.0),
              _STEEL),
    Plausible("tensile_strength", "tensile strength", "MPa", (200.0, 1500.0), (300.0, 900.0),
              _STEEL + "; tensile/yield about 1.05-1.35"),
    Plausible("elongation", "elongation", "%", (0.0, 100.0), (1.0, 40.0),
              "common practice: A_gt of 2.5-7.5 % and A5 of 12-30 % for reinforcing steel "
              "(EN 1992-1-1 Annex C, from memory)"),
)}

#: Every plausibility flag with its reason (merged into screening.FLAG_REASONS).
FLAGS: dict[str, str] = {r.flag: r.reason() for r in RANGES.values()}

#: Largest tension reinforcement ratio A_s / (b h) accepted in a site file [-]:
#: EN 1992-1-1 9.2.1.1(3) limits A_s,max to 0.04 A_c outside lap locations
#: (from memory); twice that allows for laps and for compression steel.
MAX_REINFORCEMENT_RATIO = 0.08


def hard_message(spec: Plausible, value: float, as_given: str | None = None) -> str:
    """Message for a value outside the hard range."""
    shown = f"{value:.6g} {spec.unit}"
    if as_given:
        shown = f"{as_given} (= {shown})"
    return (f"{spec.label} {shown} is outside the plausible range {_interval(spec.hard)} "
            f"{spec.unit} ({spec.source}); check the value and the unit")


def check(quantity: str, value: float) -> str | None:
    """Where `value` [canonical unit] lies: None (usual), "soft" or "hard".

    Raises
    ------
    KeyError
        Unknown quantity.
    """
    spec = RANGES[quantity]
    if not (spec.hard[0] <= value <= spec.hard[1]):
        return "hard"
    if not (spec.soft[0] <= value <= spec.soft[1]):
        return "soft"
    return None


def within_member_depth(value_mm: float, member_depth_mm: float | None, *,
                        allow_equal: bool = False) -> bool:
    """True if a depth-like measurement fits in the member (or the depth is unknown).

    Parameters
    ----------
    value_mm : float
        Cover, carbonation depth or depth of a chloride increment from the surface [mm].
    member_depth_mm : float or None
        Overall depth h of the member from the site file [mm]; None = not known.
    allow_equal : bool
        Accept a value equal to the depth (a carbonation front or a chloride
        increment reaching the far face); a cover must be smaller.

    Returns
    -------
    bool
        False when the value is not smaller than the member depth (a cover of
        the member depth or more leaves no concrete on the far side; a depth
        measured from one face cannot exceed the member), common practice.
    """
    if member_depth_mm is None:
        return True
    return value_mm <= member_depth_mm if allow_equal else value_mm < member_depth_mm
