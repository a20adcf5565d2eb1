"""Measurement error of each test method: one value, one source, used everywhere.

An observation is the true local value plus an error, y = x + e, e ~ N(0, sd^2),
independent between readings. The updating models add this term to their
likelihoods, so the population spread they estimate (cores, tensile tests,
cover, section loss) or the scatter they estimate (carbonation, chloride)
excludes it, and the value-of-information programmes simulate future readings
with the same sd (`assess.site.worth_decision.make_programme`): the error is
counted once, in the reading, and never again in the population.

Each entry gives the standard deviation of one reading on the scale the model
uses (``scale`` ``"log"``: on ln of the value, i.e. about a coefficient of
variation; ``"linear"``: in the unit of the value) and its source. Values tagged
"(from memory)" were recalled, not re-read; "judgement" marks a choice of ours.

Example: ``MEASUREMENT_ERRORS["cover"].sd`` is 3.0 [mm].
"""

from __future__ import annotations

import dataclasses
import math
from types import MappingProxyType

from assess.errors import InputError


@dataclasses.dataclass(frozen=True)
class MeasurementError:
    """Standard deviation of the error of one reading.

    Attributes
    ----------
    sd : float
        Standard deviation [``unit``], >= 0.
    unit : str
        Unit of ``sd``, e.g. ``"[mm]"``; ``"[-] on ln"`` for a log-scale error.
    scale : {"linear", "log"}
        The scale on which the error is added.
    source : str
        Where the value comes from.
    """

    sd: float
    unit: str
    scale: str
    source: str

    def __post_init__(self):
        if not (math.isfinite(self.sd) and self.sd >= 0):
            raise InputError(f"A measurement error sd must be finite and >= 0. Got {self.sd!r}.",
                             column="sd")
        if self.scale not in ("linear", "log"):
            raise InputError(f"A measurement error scale must be 'linear' or 'log'. Got "
                             f"{self.scale!r}.", column="scale")


MEASUREMENT_ERRORS = MappingProxyType({
    "cores": MeasurementError(
        0.05, "[-] on ln f_c", "log",
        "Testing precision of concrete specimens, EN 12390-3 precision data: repeatability "
        "sd about 3 %, reproducibility sd about 5 % of the strength (from memory); a drilled "
        "core adds drilling damage and the conversion to in-situ strength (EN 13791 "
        "commentary, from memory). 0.05 on ln f_c: judgement within that range."),
    "tensile": MeasurementError(
        8.0, "[MPa]", "linear",
        "EN ISO 6892-1 Annex on measurement uncertainty: yield-strength reproducibility of "
        "about +-2-3 % (expanded, k = 2) in inter-laboratory tests (from memory), i.e. an sd "
        "of about 1.5 % = 8 MPa at 550 MPa."),
    "cover": MeasurementError(
        3.0, "[mm]", "linear",
        "BS 1881-204:1988 cover-meter accuracy +-5 % or +-2 mm, whichever is greater, under "
        "laboratory conditions (from memory; the same tolerance appears in cover-meter "
        "makers' calibration instructions); on site (congested or unknown bars) worse: "
        "3 mm, the middle of the 1-5 mm usually quoted (judgement)."),
    "carbonation": MeasurementError(
        1.0, "[mm]", "linear",
        "Phenolphthalein front on a fresh fracture or core face, read with a calliper to "
        "0.5 mm (EN 14630, from memory); reading an uneven front: sd 1 mm (judgement)."),
    "chloride": MeasurementError(
        0.10, "[-] on ln C", "log",
        "Acid-soluble chloride by potentiometric titration (EN 14629): repeatability of a "
        "few per cent of the content (from memory); grinding, sub-sampling and the depth "
        "increment add to it: 10 % (judgement)."),
    "halfcell": MeasurementError(
        5.0, "[mV]", "linear",
        "ASTM C876 precision statement: single-operator standard deviation of about 5 mV; "
        "two readings with one cell at one place should not differ by more than about "
        "10 mV (from memory)."),
    "section_loss": MeasurementError(
        0.02, "[-]", "linear",
        "Residual-area ratio from calliper readings of a cleaned bar at a break-out: about "
        "0.2 mm on a 16-20 mm bar, i.e. 0.02 on A/A0 (judgement; common practice)."),
})
"""Measurement error of one reading by record kind (see the module notes)."""

QUANTITY_RECORD_KINDS = MappingProxyType({
    "concrete": "cores", "steel": "tensile", "cover": "cover", "area_ratio": "section_loss",
})
"""Record kind of each materials population (`assess.site.knowledge.QUANTITIES`)."""

PROGRAMME_RECORD_KINDS = MappingProxyType({
    "cores": "cores", "breakouts": "section_loss", "cover": "cover",
})
"""Record kind of each value-of-information programme kind with a measurement error."""


def measurement_sd(kind: str) -> float:
    """Standard deviation of one reading of a record kind (see `MEASUREMENT_ERRORS`)."""
    try:
        return float(MEASUREMENT_ERRORS[kind].sd)
    except KeyError:
        raise InputError(f"No measurement error is stated for {kind!r}. Known kinds: "
                         f"{sorted(MEASUREMENT_ERRORS)}.", column="kind") from None


def quantity_measurement_sd(quantity: str, log: bool | None = None, values=None) -> float:
    """Measurement sd of the readings of a materials population (0 when none is stated).

    Parameters
    ----------
    quantity : str
        A population of `assess.site.knowledge.QUANTITIES`.
    log : bool, optional
        True when the model works on ln of the readings. A linear error (e.g. cover
        [mm]) is then carried to the log scale as sd / median(values) (first-order,
        delta method); a log-scale error on a linear model as sd x median(values).
        None: the error on its own scale.
    values : array_like, optional
        The readings, on the physical scale [unit]; needed when the scales differ.
    """
    kind = QUANTITY_RECORD_KINDS.get(quantity)
    if kind is None:
        return 0.0
    entry = MEASUREMENT_ERRORS[kind]
    if log is None or (entry.scale == "log") == bool(log):
        return float(entry.sd)
    if values is None or len(values) == 0:
        raise InputError(f"Converting the {kind} measurement error between scales needs the "
                         "readings.", column="values")
    import numpy as np

    typical = float(np.median(np.asarray(values, dtype=float)))
    return float(entry.sd / typical if log else entry.sd * typical)


def measurement_table() -> list[dict]:
    """Rows (kind, sd, unit, scale, source) for reports and the JSON."""
    return [{"kind": k, **dataclasses.asdict(v)} for k, v in MEASUREMENT_ERRORS.items()]
