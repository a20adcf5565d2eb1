"""Decision set-up files: what can be done with a member, what it costs, what could be tested.

A decision file is a small TOML file in the site folder (``decisions.toml`` by
default). It gives the money side of "is more testing worth it?": the cost of
failure, the decision horizon and discount rate, the alternatives open to the
owner with their cost and assumed effect, and the candidate test programmes with
their cost and measurement error. Unknown keys are an error, so that a typo is
never silently ignored; every error names the file and the key path.

File layout
-----------
.. code-block:: toml

    currency = "EUR"              # label for reports
    failure_cost = 3_000_000      # cost of failure, all consequences [currency]
    horizon = 15                  # decision horizon [years]
    discount_rate = 0.02          # annual discount rate [-]
    member = "B3-04"              # optional; default: lowest system beta after updating

    # "keep as is" (cost 0, no effect) is always an alternative.
    [alternatives.repair]         # break out, clean, replace corroded bars
    cost = 60_000                 # [currency]; effect: residual area ratio back to the design prior

    [alternatives.strengthen]     # e.g. bonded plates or sheets
    cost = 90_000                 # [currency]
    capacity_factor = 1.3         # multiplies the resistance model uncertainty [-]

    [alternatives.restrict_load]  # e.g. close the level to heavy vehicles
    cost_per_year = 8_000         # [currency/year], or cost = ... once [currency]
    load_factor = 0.6             # multiplies the imposed (vehicle) load [-]

    [alternatives.replace]        # new member
    cost = 250_000                # [currency]; effect: annual pf = target pf

    [[programmes]]
    name = "6 cores"              # unique short label
    kind = "cores"                # cores | breakouts | cover | half-cell
    zone = "L3"                   # optional; default the member's zone
    count = 6                     # cores, break-outs or readings [-]
    measurement_sd = 0.05         # error of one reading (cores: on ln f_c [ln MPa];
                                  # break-outs: on the area ratio [-]; cover: [mm])
    cost = 4_000                  # [currency]

    [[programmes]]
    name = "half-cell grid"
    kind = "half-cell"
    count = 40                    # grid points [-]
    probability_of_detection = 0.8
    probability_of_false_alarm = 0.2
    active_below = 0.98           # optional: area ratio below which a point counts as active [-]
    cost = 3_000

Every alternative table is optional; at least one must be given besides
"keep as is". Costs are taken as paid at decision time; a yearly cost of
restricting the load is turned into its present value over the horizon.
"""

from __future__ import annotations

import dataclasses
import math
import warnings
from pathlib import Path

import tomllib

from assess.errors import InputError
from assess.updating.measurement_error import (
    MEASUREMENT_ERRORS,
    PROGRAMME_RECORD_KINDS,
    measurement_sd,
)

PROGRAMME_KINDS = ("cores", "breakouts", "cover", "half-cell")
ALTERNATIVE_KINDS = ("repair", "strengthen", "restrict_load", "replace")
DEFAULT_FILE_NAME = "decisions.toml"

_TOP_KEYS = {"currency", "failure_cost", "horizon", "discount_rate", "member", "alternatives",
             "programmes"}
_ALTERNATIVE_KEYS = {
    "repair": {"cost", "description"},
    "strengthen": {"cost", "capacity_factor", "description"},
    "restrict_load": {"cost", "cost_per_year", "load_factor", "description"},
    "replace": {"cost", "description"},
}
_PROGRAMME_KEYS = {
    "cores": {"name", "kind", "zone", "count", "measurement_sd", "cost", "description"},
    "breakouts": {"name", "kind", "zone", "count", "measurement_sd", "cost", "description"},
    "cover": {"name", "kind", "zone", "count", "measurement_sd", "cost", "description"},
    "half-cell": {"name", "kind", "zone", "count", "probability_of_detection",
                  "probability_of_false_alarm", "active_below", "cost", "description"},
}


@dataclasses.dataclass(frozen=True)
class AlternativeSpec:
    """One alternative as read from the file.

    Attributes
    ----------
    kind : str
        ``"keep"``, ``"repair"``, ``"strengthen"``, ``"restrict_load"`` or ``"replace"``.
    cost : float
        Cost paid at decision time [currency].
    cost_per_year : float
        Yearly cost over the horizon (restrict_load only) [currency/year].
    factor : float
        capacity_factor (strengthen) or load_factor (restrict_load) [-]; 1 otherwise.
    description : str
        Free text for reports.
    """

    kind: str
    cost: float = 0.0
    cost_per_year: float = 0.0
    factor: float = 1.0
    description: str = ""


@dataclasses.dataclass(frozen=True)
class ProgrammeSpec:
    """One candidate test programme as read from the file.

    Attributes
    ----------
    name, kind : str
        Unique label and one of `PROGRAMME_KINDS`.
    zone : str or None
        Zone tested; None means the chosen member's zone.
    count : int
        Number of cores, break-outs or readings [-].
    cost : float
        [currency]
    measurement_sd : float
        Error of one reading: [ln MPa] cores, [-] break-outs, [mm] cover; by
        default the value the site update uses
        (`assess.updating.measurement_error.MEASUREMENT_ERRORS`), so that the
        error is counted once.
    probability_of_detection, probability_of_false_alarm : float
        Half-cell survey only [-].
    active_below : float
        Half-cell only: area ratio below which a grid point counts as actively
        corroding [-].
    description : str
        Free text for reports.
    """

    name: str
    kind: str
    zone: str | None
    count: int
    cost: float
    measurement_sd: float = 0.0
    probability_of_detection: float = math.nan
    probability_of_false_alarm: float = math.nan
    active_below: float = 0.98
    description: str = ""


@dataclasses.dataclass(frozen=True)
class DecisionSetup:
    """Contents of a decision file.

    Attributes
    ----------
    currency : str
    failure_cost : float
        [currency]
    horizon_years : int
        [years]
    discount_rate : float
        [1/year]
    member : str or None
        Member to decide on; None: the one with the lowest system beta.
    alternatives : tuple of AlternativeSpec
        "keep as is" first.
    programmes : tuple of ProgrammeSpec
    path : Path or None
        File read.
    """

    currency: str
    failure_cost: float
    horizon_years: int
    discount_rate: float
    member: str | None
    alternatives: tuple
    programmes: tuple
    path: Path | None = None


class _Reader:
    """Checks values and raises InputError naming the file and key path."""

    def __init__(self, path):
        self.path = path

    def fail(self, key: str, message: str):
        raise InputError(message, file=self.path, column=key)

    def check_keys(self, table, allowed: set, key: str):
        if not isinstance(table, dict):
            self.fail(key, f"expected a table of keys, got {type(table).__name__}")
        unknown = sorted(set(table) - allowed)
        if unknown:
            where = f"{key}.{unknown[0]}" if key else unknown[0]
            self.fail(where, f"unknown key '{unknown[0]}'; allowed keys here are "
                             f"{', '.join(sorted(allowed))}")

    def number(self, table, name, key, *, default=None, minimum=None, exclusive=False,
               maximum=None, integer=False):
        path = f"{key}.{name}" if key else name
        if name not in table:
            if default is None:
                self.fail(path, "this key is required")
            return default
        value = table[name]
        kind = "a whole number" if integer else "a number"
        if isinstance(value, bool) or not isinstance(value, int if integer else (int, float)):
            self.fail(path, f"expected {kind}, got {value!r}")
        if not math.isfinite(value):
            self.fail(path, f"expected a finite number, got {value!r}")
        if minimum is not None and (value <= minimum if exclusive else value < minimum):
            self.fail(path, f"expected {kind} {'>' if exclusive else '>='} {minimum:g}, "
                            f"got {value!r}")
        if maximum is not None and value > maximum:
            self.fail(path, f"expected {kind} <= {maximum:g}, got {value!r}")
        return int(value) if integer else float(value)

    def text(self, table, name, key, *, default=None):
        path = f"{key}.{name}" if key else name
        if name not in table:
            if default is None:
                self.fail(path, "this key is required")
            return default
        value = table[name]
        if not isinstance(value, str) or not value.strip():
            self.fail(path, f"expected a non-empty text, got {value!r}")
        return value.strip()


def _alternative(reader: _Reader, kind: str, table) -> AlternativeSpec:
    key = f"alternatives.{kind}"
    reader.check_keys(table, _ALTERNATIVE_KEYS[kind], key)
    description = reader.text(table, "description", key, default="")
    if kind == "restrict_load":
        has_once, has_yearly = "cost" in table, "cost_per_year" in table
        if has_once == has_yearly:
            reader.fail(f"{key}.cost", "give exactly one of cost (once) [currency] or "
                                       "cost_per_year [currency/year]")
        factor = reader.number(table, "load_factor", key, minimum=0.0, exclusive=True,
                               maximum=1.0)
        return AlternativeSpec(kind, cost=reader.number(table, "cost", key, default=0.0,
                                                        minimum=0.0),
                               cost_per_year=reader.number(table, "cost_per_year", key,
                                                           default=0.0, minimum=0.0),
                               factor=factor, description=description)
    cost = reader.number(table, "cost", key, minimum=0.0)
    factor = 1.0
    if kind == "strengthen":
        factor = reader.number(table, "capacity_factor", key, minimum=1.0, exclusive=True)
    return AlternativeSpec(kind, cost=cost, factor=factor, description=description)


def _programme(reader: _Reader, index: int, table) -> ProgrammeSpec:
    key = f"programmes[{index}]"
    if not isinstance(table, dict):
        reader.fail(key, "each [[programmes]] entry must be a table")
    kind = reader.text(table, "kind", key)
    if kind not in PROGRAMME_KINDS:
        reader.fail(f"{key}.kind", f"unknown programme kind {kind!r}; choose one of "
                                   f"{', '.join(PROGRAMME_KINDS)}")
    reader.check_keys(table, _PROGRAMME_KEYS[kind], key)
    common = dict(name=reader.text(table, "name", key), kind=kind,
                  zone=reader.text(table, "zone", key, default="") or None,
                  count=reader.number(table, "count", key, minimum=1, integer=True),
                  cost=reader.number(table, "cost", key, minimum=0.0),
                  description=reader.text(table, "description", key, default=""))
    if kind == "half-cell":
        pod = reader.number(table, "probability_of_detection", key, minimum=0.0, maximum=1.0)
        pfa = reader.number(table, "probability_of_false_alarm", key, minimum=0.0, maximum=1.0)
        if pod <= pfa:
            reader.fail(f"{key}.probability_of_detection",
                        f"the probability of detection ({pod:g}) must exceed the probability "
                        f"of false alarm ({pfa:g}), or the survey tells nothing")
        return ProgrammeSpec(**common, probability_of_detection=pod,
                             probability_of_false_alarm=pfa,
                             active_below=reader.number(table, "active_below", key,
                                                        default=0.98, minimum=0.0,
                                                        exclusive=True, maximum=1.0))
    record_kind = PROGRAMME_RECORD_KINDS[kind]
    update_sd = measurement_sd(record_kind)
    sd = reader.number(table, "measurement_sd", key, default=update_sd, minimum=0.0)
    if not math.isclose(sd, update_sd, rel_tol=1e-9, abs_tol=1e-12):
        where = f"{reader.path}: " if reader.path else ""
        warnings.warn(f"{where}{key}.measurement_sd = {sd:g} differs from the "
                      f"measurement error the site update gives a {record_kind} reading "
                      f"({update_sd:g} {MEASUREMENT_ERRORS[record_kind].unit}, "
                      f"assess.updating.measurement_error): the value of information is then "
                      f"computed for a different test than the one the update would read. "
                      f"Leave the key out to use the update's value.", UserWarning,
                      stacklevel=2)
    return ProgrammeSpec(**common, measurement_sd=sd)


def parse_decision_setup(data: dict, path=None) -> DecisionSetup:
    """Check a parsed decision file (dict from TOML) and return its `DecisionSetup`.

    Raises
    ------
    InputError
        Naming the file and the key path of the first problem found.
    """
    reader = _Reader(path)
    reader.check_keys(data, _TOP_KEYS, "")
    alternatives_table = data.get("alternatives", {})
    reader.check_keys(alternatives_table, set(ALTERNATIVE_KINDS), "alternatives")
    alternatives = [AlternativeSpec("keep", description="keep the member as it is")]
    for kind in ALTERNATIVE_KINDS:
        if kind in alternatives_table:
            alternatives.append(_alternative(reader, kind, alternatives_table[kind]))
    if len(alternatives) < 2:
        reader.fail("alternatives", "give at least one alternative besides keeping the member "
                                    f"as it is: {', '.join(ALTERNATIVE_KINDS)}")
    entries = data.get("programmes", [])
    if not isinstance(entries, list) or not entries:
        reader.fail("programmes", "give at least one [[programmes]] entry (a candidate test "
                                  "programme)")
    programmes = tuple(_programme(reader, i, entry) for i, entry in enumerate(entries))
    names = [p.name for p in programmes]
    for i, name in enumerate(names):
        if name in names[:i]:
            reader.fail(f"programmes[{i}].name", f"programme name {name!r} is used twice")
    return DecisionSetup(
        currency=reader.text(data, "currency", "", default="EUR"),
        failure_cost=reader.number(data, "failure_cost", "", minimum=0.0, exclusive=True),
        horizon_years=reader.number(data, "horizon", "", minimum=1, maximum=200, integer=True),
        discount_rate=reader.number(data, "discount_rate", "", default=0.0, minimum=0.0,
                                    maximum=0.5),
        member=reader.text(data, "member", "", default="") or None,
        alternatives=tuple(alternatives), programmes=programmes,
        path=Path(path) if path is not None else None)


def read_decision_setup(path) -> DecisionSetup:
    """Read and check a decision file (see the module docstring for its layout).

    Parameters
    ----------
    path : str or Path
        The TOML file.

    Raises
    ------
    InputError
        File missing or unreadable, TOML syntax error, or a bad key (named by its path).
    """
    path = Path(path)
    if not path.is_file():
        raise InputError("decision file not found", file=path)
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise InputError(f"not a valid TOML file: {exc}", file=path) from None
    return parse_decision_setup(data, path)


__all__ = ["ALTERNATIVE_KINDS", "AlternativeSpec", "DEFAULT_FILE_NAME", "DecisionSetup",
           "PROGRAMME_KINDS", "ProgrammeSpec", "parse_decision_setup", "read_decision_setup"]
