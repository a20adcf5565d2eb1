"""The site file (``site.toml``) and the campaign file (``campaign.toml``).

`load_site` reads a site file, checks every key against the schema in
``docs/data-formats.md`` and returns frozen dataclasses. Any problem raises
`InputError` naming the file and the dotted key path (``members.S1-03.span``);
unknown keys are an error, so a typo is never silently ignored.

Units follow the file contract: lengths [mm], spans [m], loads [kN/m2],
unit weights [kN/m3], densities and binder content [kg/m3].

Hostile files are refused cheaply before parsing: at most `MAX_TOML_BYTES`,
arrays and inline tables nested at most `MAX_TOML_DEPTH` deep (Python's TOML
parser recurses once per level) and numbers of at most `MAX_TOML_DIGITS` digits
(a 5000-digit integer would exceed Python's integer-to-text limit), each checked
by one scan over the text that skips strings and comments.

Exposure
--------
A zone's ``exposure`` is one of the tool's exposure settings (`EXPOSURES`) or
EN 206 exposure classes (EN 206:2013+A2:2021 Table 1): one class (``"XD3"``),
several in one text (``"XC3, XD3, XF4"``) or an array. Each corrosion class maps
to the setting whose priors fit it (`EN206_EXPOSURE`, a judgement stated there);
with several classes the most severe setting wins; freeze-thaw (XF), chemical
(XA) and abrasion (XM) classes are kept but do not choose the setting. The
classes given are kept on `Zone.exposure_classes`.

Target override
---------------
A zone or a member may set ``target_beta`` (reliability index for the site's
reference period) with a required ``target_beta_reason``; the schema stores
both on `Zone` / `Member` for the target-reliability step to use.
"""

from __future__ import annotations

import datetime as dt
import difflib
import math
import re
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType
from typing import Any

import tomllib

from inspection_io.console_text import quote_cell
from inspection_io.errors import InputError
from inspection_io.plausibility import MAX_REINFORCEMENT_RATIO

CONSEQUENCE_CLASSES = ("CC1", "CC2", "CC3")
COST_OF_SAFETY = ("high", "normal", "low")
PRODUCTION = ("ready-mixed", "precast")
CEMENT_TYPES = ("CEM I", "fly ash", "CEM III")
IMPOSED_CATEGORIES = ("F", "G")
EXPOSURES = ("exposed deck", "sheltered soffit", "internal")
#: EN 206 exposure classes (EN 206:2013+A2:2021 Table 1: X0 no risk; XC1 dry or permanently
#: wet, XC2 wet rarely dry, XC3 moderate humidity, XC4 cyclic wet and dry; XD1-XD3 chlorides
#: other than from sea water, moderate humidity / wet rarely dry / cyclic wet and dry, XD3
#: naming car park slabs; XS1 airborne salt, XS2 permanently submerged, XS3 tidal, splash
#: and spray) mapped to the exposure settings whose priors fit them. Judgement: no chloride
#: source -> "internal" when dry (X0, XC1), else "sheltered soffit" (carbonation-induced
#: corrosion); airborne chlorides (XD1, XS1) -> "sheltered soffit" (spray-borne chloride);
#: chloride-laden water in contact (XD2, XD3, XS2, XS3) -> "exposed deck".
EN206_EXPOSURE = {
    "X0": "internal", "XC1": "internal",
    "XC2": "sheltered soffit", "XC3": "sheltered soffit", "XC4": "sheltered soffit",
    "XD1": "sheltered soffit", "XS1": "sheltered soffit",
    "XD2": "exposed deck", "XD3": "exposed deck", "XS2": "exposed deck", "XS3": "exposed deck",
}
#: EN 206 classes accepted beside a corrosion class but not choosing the setting:
#: freeze-thaw XF1-XF4, chemical attack XA1-XA3, abrasion XM1-XM3 (EN 206 Table 1 and
#: its national annexes, from memory for XM).
EN206_OTHER_CLASSES = ("XF1", "XF2", "XF3", "XF4", "XA1", "XA2", "XA3", "XM1", "XM2", "XM3")
#: Accepted range of a direct target reliability index [-]: EN 1990 Annex B Table B2 gives
#: 3.3-5.2 and the JCSS Probabilistic Model Code annual targets 3.1-4.7 (from memory);
#: values outside 1.5-6.0 are taken as a typing mistake.
TARGET_BETA_RANGE = (1.5, 6.0)
#: Fewest characters of the reason for a target override [-].
MIN_REASON_CHARS = 10
#: Most characters in a zone or member id [-] (ids are short labels shown in tables).
MAX_ID_CHARS = 64
#: Largest site or campaign file read [bytes].
MAX_TOML_BYTES = 1_000_000
#: Deepest nesting of arrays and inline tables accepted [-].
MAX_TOML_DEPTH = 32
#: Most digits in one number of a TOML file [-].
MAX_TOML_DIGITS = 50
MEMBER_KINDS = ("one-way slab", "beam", "flat-slab column connection")
TENSION_FACES = ("bottom", "top")
COLUMN_POSITIONS = ("interior", "edge", "corner")
#: Kinds of car-park use with their own occupancy parameters; the same names as the keys of
#: ``assess.priors.actions.CAR_PARK_VEHICLES["use"]`` (JCSS PMC car-park model), kept here
#: because this package knows nothing about reliability (a test checks they agree).
CAR_PARK_USES = ("commercial", "rail or airport", "offices or factories", "residential")

_CONCRETE_CLASS = re.compile(r"^C(\d{1,3})(?:/(\d{1,3}))?$")
_STEEL_GRADE = re.compile(r"^[A-Za-z]{1,3}(\d{3})[A-Za-z]?$")


# --------------------------------------------------------------------------- dataclasses
@dataclass(frozen=True)
class SiteInfo:
    """The ``[site]`` table."""

    name: str
    """Name of the structure."""
    year_built: int
    """Year of construction [-]."""
    assessment_date: dt.date
    """Date the assessment refers to."""
    structure: str | None = None
    """Kind of structure, free text (e.g. "multi-storey car park")."""


@dataclass(frozen=True)
class Target:
    """The ``[target]`` table: settings that choose the target reliability."""

    consequence_class: str
    """EN 1990 consequence class: "CC1", "CC2" or "CC3"."""
    reference_period: float
    """Reference period [years]: 1 (annual) or the remaining working life."""
    cost_of_safety: str
    """Relative cost of safety measures: "high", "normal" or "low"."""


@dataclass(frozen=True)
class Materials:
    """The ``[materials]`` table: materials as specified at design."""

    concrete_class: str
    """EN 206 class, e.g. "C30" or "C30/37"."""
    steel_grade: str
    """Reinforcement grade with its characteristic yield in the name, e.g. "B500"."""
    production: str = "ready-mixed"
    """"ready-mixed" or "precast"."""
    cement_type: str | None = None
    """"CEM I", "fly ash" or "CEM III" (sets the chloride ageing exponent)."""
    binder_content: float | None = None
    """Binder content [kg/m3]."""
    concrete_density: float | None = None
    """Concrete density [kg/m3]."""
    water_cement_ratio: float | None = None
    """Water/cement ratio [-]."""

    @property
    def f_ck(self) -> float:
        """Specified characteristic cylinder strength [MPa] (the number after "C")."""
        return float(_CONCRETE_CLASS.match(self.concrete_class).group(1))

    @property
    def f_yk(self) -> float:
        """Specified characteristic yield strength of the reinforcement [MPa]."""
        return float(_STEEL_GRADE.match(self.steel_grade).group(1))


@dataclass(frozen=True)
class Loads:
    """The ``[loads]`` table."""

    superimposed_dead: float
    """Superimposed dead load: screed, waterproofing, surfacing [kN/m2]."""
    imposed_category: str
    """EN 1991-1-1 parking category: "F" (vehicles <= 30 kN) or "G"."""
    imposed_characteristic: float
    """Characteristic imposed load q_k [kN/m2]."""
    concrete_unit_weight: float
    """Unit weight of reinforced concrete for self-weight [kN/m3]."""


@dataclass(frozen=True)
class Zone:
    """One ``[zones.<id>]`` table: a level, a pour, a deck area."""

    zone_id: str
    description: str
    exposure: str
    """"exposed deck", "sheltered soffit" or "internal" (mapped from EN 206 classes if given)."""
    mean_annual_temperature: float | None = None
    """Mean annual temperature [degC]."""
    exposure_classes: tuple[str, ...] = ()
    """EN 206 exposure classes as given (``("XC3", "XD3")``); empty when a setting was named."""
    target_beta: float | None = None
    """Direct target reliability index for the zone's members [-] (site reference period)."""
    target_beta_reason: str | None = None
    """Why the target is set directly (required with `target_beta`)."""
    half_cell_calibration: Mapping[str, Any] | None = None
    """``[zones.<id>.half_cell_calibration]``: the engineer's own likelihood of a half-cell
    reading given the steel's state, calibrated on this site (``active_mean``,
    ``active_sd``, ``passive_mean``, ``passive_sd`` [mV vs CSE] and ``basis``, the text
    saying what it was calibrated on); None: the published ranges of the zone's condition."""


@dataclass(frozen=True)
class Member:
    """One ``[members.<id>]`` table."""

    member_id: str
    zone: str
    """Zone id the member belongs to."""
    kind: str
    """"one-way slab", "beam" or "flat-slab column connection"."""
    depth: float
    """Overall depth h [mm]."""
    cover: float
    """Nominal cover to the main (tension) bars [mm]."""
    bar_diameter: float
    """Main bar diameter [mm]."""
    width: float
    """Width b [mm] (1000 for slabs per metre strip)."""
    span: float | None = None
    """Simply supported equivalent span [m] (slabs and beams)."""
    bar_spacing: float | None = None
    """Main bar spacing [mm] (give this or `steel_area`)."""
    steel_area: float | None = None
    """Tension steel area in the width b [mm2] (give this or `bar_spacing`)."""
    shear_reinforcement: bool = False
    tension_face: str = "bottom"
    """Face the main bars are on: "bottom" or "top"."""
    column_size: tuple[float, float] | None = None
    """Column dimensions c1, c2 [mm] (flat-slab column connections)."""
    position: str | None = None
    """"interior", "edge" or "corner" (flat-slab column connections)."""
    span_x: float | None = None
    """Span in x around the column [m] (flat-slab column connections)."""
    span_y: float | None = None
    """Span in y around the column [m] (flat-slab column connections)."""
    tributary_width: float | None = None
    """Width of deck carried by a beam [m] (beams; default: the beam's own width)."""
    slab_depth: float | None = None
    """Depth of the slab a beam carries [mm] (beams; default: no slab above the web)."""
    target_beta: float | None = None
    """Direct target reliability index of this member [-] (site reference period)."""
    target_beta_reason: str | None = None
    """Why the target is set directly (required with `target_beta`)."""
    continuous: bool = False
    """Continuous over its supports (slabs and beams): adds a hogging mode at the support."""
    span_count: int | None = None
    """Number of equal spans of the continuous run [-] (continuous members, >= 2)."""
    span_position: str | None = None
    """"end" or "interior": which span of the run the member is (continuous members)."""
    top_bar_diameter: float | None = None
    """Top bar diameter over the supports [mm]."""
    top_bar_spacing: float | None = None
    """Top bar spacing [mm] (give this or `top_steel_area`)."""
    top_steel_area: float | None = None
    """Top steel area in the width b [mm2] (give this or `top_bar_spacing`)."""
    top_cover: float | None = None
    """Nominal cover to the top bars [mm] (default: `cover`)."""

    @property
    def top_tension_steel_area(self) -> float | None:
        """Top steel area in the width b [mm2] (from `top_bar_spacing` if not given); None
        without top bars."""
        if self.top_steel_area is not None:
            return self.top_steel_area
        if self.top_bar_diameter is None or self.top_bar_spacing is None:
            return None
        bar_area = 3.141592653589793 * self.top_bar_diameter ** 2 / 4.0
        return bar_area * self.width / self.top_bar_spacing

    @property
    def top_bar_cover(self) -> float:
        """Nominal cover to the top bars [mm] (`top_cover`, else `cover`)."""
        return self.cover if self.top_cover is None else self.top_cover

    @property
    def effective_depth(self) -> float:
        """Effective depth d = h - cover - bar_diameter / 2 [mm]."""
        return self.depth - self.cover - self.bar_diameter / 2.0

    @property
    def tension_steel_area(self) -> float:
        """Tension steel area in the width b [mm2] (from `bar_spacing` if not given)."""
        if self.steel_area is not None:
            return self.steel_area
        bar_area = 3.141592653589793 * self.bar_diameter ** 2 / 4.0
        return bar_area * self.width / self.bar_spacing


@dataclass(frozen=True)
class Priors:
    """The optional ``[priors]`` table: the engineer's own knowledge in place of design priors.

    Every field is None when not given; then the published design-stage prior is used.
    Values must be mean values (in-situ means from records), not characteristic values.
    """

    concrete_mean: float | None = None
    """Mean in-situ compressive strength f_c [MPa] (given with `concrete_cov`)."""
    concrete_cov: float | None = None
    """Coefficient of variation of f_c [-] (given with `concrete_mean`)."""
    steel_mean: float | None = None
    """Mean yield strength of the reinforcement f_y [MPa] (given with `steel_std`)."""
    steel_std: float | None = None
    """Standard deviation of f_y [MPa] (given with `steel_mean`)."""
    cover_mean: float | None = None
    """Mean cover to the main bars [mm], all zones (given with `cover_std`)."""
    cover_std: float | None = None
    """Standard deviation of the cover [mm] (given with `cover_mean`)."""
    imposed_use: str | None = None
    """Kind of car-park use for the vehicle-load model, one of `CAR_PARK_USES`."""


@dataclass(frozen=True)
class Site:
    """A checked site file."""

    path: Path
    """The site file it was read from."""
    site: SiteInfo
    target: Target
    materials: Materials
    loads: Loads
    zones: Mapping[str, Zone]
    """Zones by id, in file order (read-only mapping)."""
    members: Mapping[str, Member]
    """Members by id, in file order (read-only mapping)."""
    priors: Priors = Priors()
    """The optional ``[priors]`` table (all fields None when absent)."""
    sampling: Mapping[str, Mapping[str, Any]] = field(default_factory=lambda: MappingProxyType({}))
    """The optional ``[sampling.<fit>]`` tables: MCMC settings per kind of fit."""
    verdict_calls: int | None = None
    """``[sampling] verdict_calls``: budget of limit-state calls per member verdict [-]
    (None when not given; the command line's ``--verdict-calls`` wins)."""
    exclude: Mapping[str, str] = field(default_factory=lambda: MappingProxyType({}))
    """The optional ``[exclude]`` table: test id (core, location...) -> the engineer's reason
    for leaving that test out of the updates (e.g. a flagged outlier found to be a bad core)."""

    @property
    def folder(self) -> Path:
        """The site folder (the directory holding the site file)."""
        return self.path.parent

    @property
    def zone_ids(self) -> tuple[str, ...]:
        return tuple(self.zones)

    @property
    def member_ids(self) -> tuple[str, ...]:
        return tuple(self.members)


@dataclass(frozen=True)
class CampaignInfo:
    """A checked ``campaign.toml``."""

    name: str
    """Campaign name, unique within the site."""
    date: dt.date
    """When the campaign's samples were taken."""
    description: str = ""


# --------------------------------------------------------------------------- checkers
class _Schema:
    """Key checks for one TOML file: every error names the file and the key path."""

    def __init__(self, file: Path):
        self.file = file

    def error(self, path: str, message: str) -> InputError:
        return InputError(message, file=self.file, column=path)

    def table(self, value: Any, path: str) -> dict:
        if not isinstance(value, dict):
            raise self.error(path, f"expected a table [{path}], got {_describe(value)}")
        return value

    def keys(self, table: dict, path: str, required: tuple[str, ...],
             optional: tuple[str, ...] = ()) -> None:
        allowed = required + optional
        for key in table:
            if key not in allowed:
                near = difflib.get_close_matches(key, allowed, n=1)
                hint = f"; did you mean '{near[0]}'?" if near else "."
                raise self.error(_join(path, key),
                                 f"unknown key '{quote_cell(key)}'{hint} Accepted keys in "
                                 f"[{path}]: {', '.join(allowed)}"
                                 if path else
                                 f"unknown table '{quote_cell(key)}'{hint} Accepted tables: "
                                 f"{', '.join(allowed)}")
        for key in required:
            if key not in table:
                where = f"[{path}]" if path else "the file"
                raise self.error(_join(path, key), f"missing required key '{key}' in {where}")

    def text(self, value: Any, path: str, choices: tuple[str, ...] | None = None) -> str:
        if not isinstance(value, str):
            raise self.error(path, f"expected a text string, got {_describe(value)}")
        if choices is not None and value not in choices:
            options = " | ".join(f'"{c}"' for c in choices)
            raise self.error(path, f"expected one of {options}, got \"{quote_cell(value)}\"")
        if choices is None and not value.strip():
            raise self.error(path, "expected a non-empty text string")
        return value

    def number(self, value: Any, path: str, low: float, high: float, unit: str,
               low_inclusive: bool = False, hint: str = "") -> float:
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise self.error(path, f"expected a number [{unit}], got {_describe(value)}")
        try:
            value = float(value)
        except OverflowError:
            raise self.error(path, f"expected a number in [{low:g}, {high:g}] [{unit}], got an "
                                   "integer too large to be a number") from None
        too_low = value < low if low_inclusive else value <= low
        if too_low or value > high or math.isnan(value):
            bracket = "[" if low_inclusive else "("
            raise self.error(path, f"expected a number in {bracket}{low:g}, {high:g}] [{unit}], "
                                   f"got {value:g}{hint}")
        return value

    def integer(self, value: Any, path: str, low: int, high: int) -> int:
        if isinstance(value, bool) or not isinstance(value, int):
            raise self.error(path, f"expected a whole number, got {_describe(value)}")
        if not low <= value <= high:
            raise self.error(path, f"expected a whole number in [{low}, {high}], got {value}")
        return value

    def boolean(self, value: Any, path: str) -> bool:
        if not isinstance(value, bool):
            raise self.error(path, f"expected true or false, got {_describe(value)}")
        return value

    def date(self, value: Any, path: str) -> dt.date:
        if isinstance(value, dt.datetime) or not isinstance(value, dt.date):
            raise self.error(path, "expected a TOML date such as 2026-11-30 (no quotes, no time), "
                                   f"got {_describe(value)}")
        return value


def _optional_text(s: _Schema, value: Any, path: str) -> str:
    if not isinstance(value, str):
        raise s.error(path, f"expected a text string, got {_describe(value)}")
    return value


def _join(path: str, key: str) -> str:
    key = quote_cell(key, 80)
    return f"{path}.{key}" if path else key


def _describe(value: Any) -> str:
    if isinstance(value, bool):
        return f"the boolean {str(value).lower()}"
    if isinstance(value, str):
        return f'the text "{quote_cell(value)}"'
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, list):
        return "an array"
    if isinstance(value, dt.datetime):
        return f"the date-time {value.isoformat()}"
    if isinstance(value, dt.date):
        return f"the date {value.isoformat()}"
    return f"{type(value).__name__} {quote_cell(repr(value))}"


def _read_toml(path: Path) -> dict:
    try:
        raw = path.read_bytes()
    except FileNotFoundError:
        raise InputError("file not found", file=path) from None
    except IsADirectoryError:
        raise InputError("expected a file, found a folder", file=path) from None
    except OSError as exc:
        raise InputError(f"cannot read the file: {exc.strerror}", file=path) from None
    if len(raw) > MAX_TOML_BYTES:
        raise InputError(f"the file has {len(raw)} bytes; a site or campaign file has at most "
                         f"{MAX_TOML_BYTES}", file=path)
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise InputError(f"the file is not UTF-8 text (byte {exc.start})", file=path) from None
    _precheck_toml(text, path)
    try:
        return tomllib.loads(text)
    except (RecursionError, MemoryError, ValueError) as exc:
        if isinstance(exc, tomllib.TOMLDecodeError):
            raise _malformed(exc, path) from None
        raise InputError(f"cannot read the file as TOML ({type(exc).__name__}: "
                         f"{quote_cell(exc, 120)})", file=path) from None


def _malformed(exc: tomllib.TOMLDecodeError, path: Path) -> InputError:
    found = re.search(r"\(at line (\d+), column (\d+)\)", str(exc))
    line = int(found.group(1)) if found else None
    reason = re.sub(r"\s*\(at line \d+, column \d+\)", "", str(exc))
    position = f" at line {found.group(1)}, column {found.group(2)}" if found else ""
    return InputError(f"malformed TOML{position}: {reason}", file=path, row=line)


_TOML_TOKEN = re.compile(r'"""|\'\'\'|"|\'|#|[\[\]{}\n]|[0-9_]{' + str(MAX_TOML_DIGITS + 1) + ",}")
_BASIC_END = re.compile(r'(?:[^"\\\n]|\\.)*"')
_MULTI_BASIC_END = re.compile(r'(?:[^\\]|\\.)*?"""', re.DOTALL)


def _precheck_toml(text: str, path: Path) -> None:
    """Refuse nesting deeper than `MAX_TOML_DEPTH` and numbers longer than `MAX_TOML_DIGITS`.

    One pass over the text, skipping strings and comments; anything malformed is
    left to the TOML parser, which reports it with line and column.
    """
    position, line, depth = 0, 1, 0
    while True:
        token = _TOML_TOKEN.search(text, position)
        if token is None:
            return
        kind, position = token.group(), token.end()
        if kind == "\n":
            line += 1
        elif kind == "#":
            end = text.find("\n", position)
            position = len(text) if end < 0 else end
        elif kind in ('"', "'", '"""', "'''"):
            if kind == '"':
                found = _BASIC_END.match(text, position)
                end = found.end() if found else text.find("\n", position)
            elif kind == '"""':
                found = _MULTI_BASIC_END.match(text, position)
                end = found.end() if found else len(text)
            else:
                close = text.find(kind, position)
                end = close + len(kind) if close >= 0 else len(text)
                if kind == "'" and 0 <= text.find("\n", position) < end:
                    end = text.find("\n", position)
            end = len(text) if end < 0 else end
            line += text.count("\n", position, end)
            position = end
        elif kind in "[{":
            depth += 1
            if depth > MAX_TOML_DEPTH:
                raise InputError(f"arrays or tables nested deeper than {MAX_TOML_DEPTH} levels "
                                 f"at line {line}; a site file nests two or three levels",
                                 file=path, row=line)
        elif kind in "]}":
            depth = max(depth - 1, 0)
        else:
            raise InputError(f"a number with {len(kind)} digits at line {line}; at most "
                             f"{MAX_TOML_DIGITS} digits are accepted", file=path, row=line)


# --------------------------------------------------------------------------- sections
def _site_info(s: _Schema, table: dict) -> SiteInfo:
    s.keys(table, "site", ("name", "year_built", "assessment_date"), ("structure",))
    assessment_date = s.date(table["assessment_date"], "site.assessment_date")
    year_built = s.integer(table["year_built"], "site.year_built", 1800, assessment_date.year)
    structure = table.get("structure")
    return SiteInfo(
        name=s.text(table["name"], "site.name"),
        year_built=year_built,
        assessment_date=assessment_date,
        structure=None if structure is None else s.text(structure, "site.structure"),
    )


def _target(s: _Schema, table: dict) -> Target:
    s.keys(table, "target", ("consequence_class", "reference_period", "cost_of_safety"))
    return Target(
        consequence_class=s.text(table["consequence_class"], "target.consequence_class",
                                 CONSEQUENCE_CLASSES),
        reference_period=s.number(table["reference_period"], "target.reference_period",
                                  0.0, 200.0, "years"),
        cost_of_safety=s.text(table["cost_of_safety"], "target.cost_of_safety", COST_OF_SAFETY),
    )


def _materials(s: _Schema, table: dict) -> Materials:
    s.keys(table, "materials", ("concrete_class", "steel_grade"),
           ("production", "cement_type", "binder_content", "concrete_density",
            "water_cement_ratio"))
    concrete_class = s.text(table["concrete_class"], "materials.concrete_class")
    found = _CONCRETE_CLASS.match(concrete_class)
    if not found or not 8 <= int(found.group(1)) <= 100:
        raise s.error("materials.concrete_class",
                      f'expected an EN 206 cylinder class such as "C30" or "C30/37" '
                      f'(C8 to C100), got "{quote_cell(concrete_class)}"')
    steel_grade = s.text(table["steel_grade"], "materials.steel_grade")
    found = _STEEL_GRADE.match(steel_grade)
    if not found or not 200 <= int(found.group(1)) <= 700:
        raise s.error("materials.steel_grade",
                      f'expected a grade with the characteristic yield in MPa in its name, such '
                      f'as "B500", "S410" or "Gr460" (200 to 700 MPa), got "{quote_cell(steel_grade)}"')

    def optional(key: str, check: Callable[[Any, str], Any]):
        return None if key not in table else check(table[key], f"materials.{key}")

    return Materials(
        concrete_class=concrete_class,
        steel_grade=steel_grade,
        production=s.text(table.get("production", "ready-mixed"), "materials.production",
                          PRODUCTION),
        cement_type=optional("cement_type", lambda v, p: s.text(v, p, CEMENT_TYPES)),
        binder_content=optional("binder_content",
                                lambda v, p: s.number(v, p, 150.0, 800.0, "kg/m3", True)),
        concrete_density=optional("concrete_density",
                                  lambda v, p: s.number(v, p, 1500.0, 3000.0, "kg/m3", True)),
        water_cement_ratio=optional("water_cement_ratio",
                                    lambda v, p: s.number(v, p, 0.2, 1.0, "-", True)),
    )


def _loads(s: _Schema, table: dict) -> Loads:
    s.keys(table, "loads", ("superimposed_dead", "imposed_category", "imposed_characteristic",
                            "concrete_unit_weight"))
    return Loads(
        superimposed_dead=s.number(table["superimposed_dead"], "loads.superimposed_dead",
                                   0.0, 50.0, "kN/m2", True),
        imposed_category=s.text(table["imposed_category"], "loads.imposed_category",
                                IMPOSED_CATEGORIES),
        imposed_characteristic=s.number(table["imposed_characteristic"],
                                        "loads.imposed_characteristic", 0.0, 50.0, "kN/m2"),
        concrete_unit_weight=s.number(table["concrete_unit_weight"], "loads.concrete_unit_weight",
                                      15.0, 30.0, "kN/m3", True),
    )


#: [priors] keys come in pairs (central value, spread); each entry is (key, low, high, unit)
#: with the accepted range (low, high].
_PRIOR_PAIRS = (
    (("concrete_mean", 5.0, 150.0, "MPa"), ("concrete_cov", 0.0, 0.5, "-")),
    (("steel_mean", 150.0, 1000.0, "MPa"), ("steel_std", 0.0, 150.0, "MPa")),
    (("cover_mean", 0.0, 200.0, "mm"), ("cover_std", 0.0, 50.0, "mm")),
)


def _priors(s: _Schema, table: dict) -> Priors:
    numeric = tuple(spec[0] for pair in _PRIOR_PAIRS for spec in pair)
    s.keys(table, "priors", (), numeric + ("imposed_use",))
    values: dict[str, Any] = {}
    for (mean_key, *mean_range), (spread_key, *spread_range) in _PRIOR_PAIRS:
        given = [key in table for key in (mean_key, spread_key)]
        if any(given) and not all(given):
            present, absent = (mean_key, spread_key) if given[0] else (spread_key, mean_key)
            raise s.error(f"priors.{absent}", f"'{present}' is given without '{absent}'; give "
                                              "both or neither")
        for key, (low, high, unit) in ((mean_key, mean_range), (spread_key, spread_range)):
            if key in table:
                values[key] = s.number(table[key], f"priors.{key}", low, high, unit)
    if "imposed_use" in table:
        values["imposed_use"] = s.text(table["imposed_use"], "priors.imposed_use", CAR_PARK_USES)
    return Priors(**values)


def _check_id(s: _Schema, key: str, path: str) -> str:
    where = quote_cell(path, 100)
    if not key.strip() or key != key.strip():
        raise s.error(where, f"an id must be non-empty text without surrounding spaces, "
                             f"got '{quote_cell(key)}'")
    if len(key) > MAX_ID_CHARS:
        raise s.error(where, f"an id has at most {MAX_ID_CHARS} characters, got {len(key)}")
    if quote_cell(key, len(key)) != key:
        raise s.error(where, f"an id must not hold control characters, got '{quote_cell(key)}'")
    return key


def _zones(s: _Schema, table: dict) -> dict[str, Zone]:
    if not table:
        raise s.error("zones", "expected at least one zone, e.g. [zones.L1]")
    zones = {}
    for zone_id, body in table.items():
        path = f"zones.{zone_id}"
        _check_id(s, zone_id, path)
        body = s.table(body, path)
        s.keys(body, path, ("description", "exposure"),
               ("mean_annual_temperature", "target_beta", "target_beta_reason",
                "half_cell_calibration"))
        temperature = body.get("mean_annual_temperature")
        exposure, classes = _exposure(s, body["exposure"], f"{path}.exposure")
        target_beta, reason = _target_override(s, body, path)
        calibration = (_half_cell_calibration(s, body["half_cell_calibration"],
                                              f"{path}.half_cell_calibration")
                       if "half_cell_calibration" in body else None)
        zones[zone_id] = Zone(
            zone_id=zone_id,
            description=s.text(body["description"], f"{path}.description"),
            exposure=exposure,
            mean_annual_temperature=None if temperature is None else s.number(
                temperature, f"{path}.mean_annual_temperature", -30.0, 40.0, "degC", True),
            exposure_classes=classes,
            target_beta=target_beta,
            target_beta_reason=reason,
            half_cell_calibration=calibration,
        )
    return zones


#: Accepted range of a calibrated mean half-cell potential [mV vs CSE]: steel in concrete
#: reads from about -1000 mV (water-saturated, no oxygen) to +200 mV (dry) in the RILEM
#: TC 154-EMC recommendation's table of typical ranges (Elsener et al., Mater. Struct. 36,
#: 2003, pp. 461-471; values from memory).
HALF_CELL_MEAN_RANGE_MV = (-1000.0, 300.0)
#: Accepted range of a calibrated standard deviation of the potentials in one state
#: [mV]; above 300 mV a reading would tell nothing (judgement).
HALF_CELL_SD_RANGE_MV = (0.0, 300.0)


def _half_cell_calibration(s: _Schema, value: Any, path: str) -> Mapping[str, Any]:
    """``[zones.<id>.half_cell_calibration]``: means and sds [mV vs CSE] and ``basis``."""
    body = s.table(value, path)
    keys = ("active_mean", "active_sd", "passive_mean", "passive_sd", "basis")
    s.keys(body, path, keys)
    out: dict[str, Any] = {}
    for state in ("active", "passive"):
        out[f"{state}_mean"] = s.number(body[f"{state}_mean"], f"{path}.{state}_mean",
                                        *HALF_CELL_MEAN_RANGE_MV, "mV vs CSE", True)
        out[f"{state}_sd"] = s.number(body[f"{state}_sd"], f"{path}.{state}_sd",
                                      *HALF_CELL_SD_RANGE_MV, "mV")
    if out["active_mean"] >= out["passive_mean"]:
        raise s.error(f"{path}.active_mean",
                      f"expected active_mean below passive_mean (corroding steel reads more "
                      f"negative than passive steel), got {out['active_mean']:g} >= "
                      f"{out['passive_mean']:g} mV")
    out["basis"] = s.text(body["basis"], f"{path}.basis")
    return MappingProxyType(out)


def _exposure(s: _Schema, value: Any, path: str) -> tuple[str, tuple[str, ...]]:
    """(exposure setting, EN 206 classes given) from a setting name or EN 206 classes."""
    accepted = (" | ".join(f'"{e}"' for e in EXPOSURES) + ", or EN 206 classes such as "
                '"XC3", "XD3" or ["XC4", "XD3", "XF4"] (XC1-XC4, XD1-XD3, XS1-XS3, X0)')
    if isinstance(value, str) and value in EXPOSURES:
        return value, ()
    if isinstance(value, str):
        items = [v for v in re.split(r"[\s,;+]+", value.strip()) if v]
    elif isinstance(value, list) and value and all(isinstance(v, str) for v in value):
        items = [v.strip() for v in value]
    else:
        raise s.error(path, f"expected {accepted}; got {_describe(value)}")
    classes = []
    for item in items:
        name = item.upper()
        if name not in EN206_EXPOSURE and name not in EN206_OTHER_CLASSES:
            raise s.error(path, f'"{quote_cell(item)}" is neither an exposure setting nor an '
                                f"EN 206 exposure class; expected {accepted}")
        if name not in classes:
            classes.append(name)
    corrosion = [c for c in classes if c in EN206_EXPOSURE]
    if not corrosion:
        raise s.error(path, f"{', '.join(classes)} describe(s) attack on the concrete, not "
                            "corrosion of the reinforcement; add the carbonation or chloride "
                            "class (X0, XC1-XC4, XD1-XD3 or XS1-XS3)")
    exposure = max((EN206_EXPOSURE[c] for c in corrosion), key=_SEVERITY.index)
    return exposure, tuple(classes)


#: Exposure settings from mild to severe (several EN 206 classes: the most severe wins).
_SEVERITY = ("internal", "sheltered soffit", "exposed deck")


def _target_override(s: _Schema, body: dict, path: str) -> tuple[float | None, str | None]:
    """``target_beta`` with its required ``target_beta_reason`` (both or neither)."""
    has_beta, has_reason = "target_beta" in body, "target_beta_reason" in body
    if not has_beta and not has_reason:
        return None, None
    if not has_beta:
        raise s.error(f"{path}.target_beta", "'target_beta_reason' is given without "
                                             "'target_beta'; give both or neither")
    low, high = TARGET_BETA_RANGE
    beta = s.number(body["target_beta"], f"{path}.target_beta", low, high, "-", True,
                    hint=" (a reliability index; EN 1990 Annex B targets lie at 3.3-5.2)")
    if not has_reason:
        raise s.error(f"{path}.target_beta_reason",
                      "a direct target_beta needs a target_beta_reason: say why the target "
                      "differs from the one the [target] settings give")
    reason = s.text(body["target_beta_reason"], f"{path}.target_beta_reason")
    if len(reason.strip()) < MIN_REASON_CHARS:
        raise s.error(f"{path}.target_beta_reason",
                      f"give a reason of at least {MIN_REASON_CHARS} characters, got "
                      f'"{quote_cell(reason)}"')
    return beta, reason.strip()


_MEMBER_COMMON = ("zone", "kind", "depth", "cover", "bar_diameter")
_MEMBER_OPTIONAL = ("bar_spacing", "steel_area", "shear_reinforcement", "tension_face",
                    "target_beta", "target_beta_reason")
#: Optional keys of slabs and beams continuous over their supports (hogging at the support).
_CONTINUITY_KEYS = ("continuous", "span_count", "span_position", "top_bar_diameter",
                    "top_bar_spacing", "top_steel_area", "top_cover")
SPAN_POSITIONS = ("end", "interior")
#: Most equal spans of a continuous run accepted [-].
MAX_SPAN_COUNT = 20
_MEMBER_KEYS = {
    "one-way slab": (_MEMBER_COMMON + ("span",),
                     _MEMBER_OPTIONAL + ("width",) + _CONTINUITY_KEYS),
    "beam": (_MEMBER_COMMON + ("span", "width"),
             _MEMBER_OPTIONAL + ("tributary_width", "slab_depth") + _CONTINUITY_KEYS),
    "flat-slab column connection": (
        _MEMBER_COMMON + ("column_size", "position", "span_x", "span_y"),
        _MEMBER_OPTIONAL + ("width",)),
}


def _span(s: _Schema, value: Any, path: str) -> float:
    hint = ""
    if isinstance(value, (int, float)) and not isinstance(value, bool) and value > 50:
        hint = " (spans are in m; this looks like mm)"
    return s.number(value, path, 0.0, 50.0, "m", hint=hint)


def _member(s: _Schema, member_id: str, body: dict, zones: Mapping[str, Zone]) -> Member:
    path = f"members.{member_id}"
    _check_id(s, member_id, path)
    if "kind" not in body:
        raise s.error(f"{path}.kind", f"missing required key 'kind' in [{path}]; expected one "
                                      f"of " + " | ".join(f'"{k}"' for k in MEMBER_KINDS))
    kind = s.text(body["kind"], f"{path}.kind", MEMBER_KINDS)
    required, optional = _MEMBER_KEYS[kind]
    s.keys(body, path, required, optional)

    zone = s.text(body["zone"], f"{path}.zone")
    if zone not in zones:
        raise s.error(f"{path}.zone", f'unknown zone "{quote_cell(zone)}"; the zones defined under [zones] '
                                      f"are: {', '.join(zones)}")
    depth = s.number(body["depth"], f"{path}.depth", 50.0, 3000.0, "mm", True,
                     hint=" (depths are in mm)")
    cover = s.number(body["cover"], f"{path}.cover", 0.0, 200.0, "mm")
    bar_diameter = s.number(body["bar_diameter"], f"{path}.bar_diameter", 3.0, 50.0, "mm", True)
    if cover >= depth:
        raise s.error(f"{path}.cover", f"cover ({cover:g} mm) must be smaller than the depth "
                                       f"({depth:g} mm)")
    if cover + bar_diameter >= depth:
        raise s.error(f"{path}.bar_diameter",
                      f"cover + bar diameter ({cover + bar_diameter:g} mm) must be smaller than "
                      f"the depth ({depth:g} mm)")
    width = s.number(body.get("width", 1000.0), f"{path}.width", 50.0, 10000.0, "mm", True,
                     hint=" (widths are in mm; 1000 for a slab strip)")

    has_spacing, has_area = "bar_spacing" in body, "steel_area" in body
    if has_spacing == has_area:
        which = "both" if has_spacing else "neither"
        raise s.error(f"{path}.bar_spacing",
                      f"give exactly one of 'bar_spacing' [mm] or 'steel_area' [mm2]; "
                      f"found {which}")
    bar_spacing = steel_area = None
    if has_spacing:
        bar_spacing = s.number(body["bar_spacing"], f"{path}.bar_spacing", bar_diameter, 1000.0,
                               "mm", hint=" (must exceed the bar diameter)")
    else:
        steel_area = s.number(body["steel_area"], f"{path}.steel_area", 0.0, 1.0e6, "mm2")
    area = steel_area if steel_area is not None else \
        3.141592653589793 * bar_diameter ** 2 / 4.0 * width / bar_spacing
    ratio = area / (width * depth)
    if ratio > MAX_REINFORCEMENT_RATIO:
        key = "steel_area" if steel_area is not None else "bar_spacing"
        raise s.error(f"{path}.{key}",
                      f"tension steel of {area:.6g} mm2 is {100 * ratio:.3g} % of the section "
                      f"{width:g} x {depth:g} mm; at most {100 * MAX_REINFORCEMENT_RATIO:g} % "
                      "is plausible (EN 1992-1-1 9.2.1.1(3) limits A_s to 4 % of A_c outside "
                      "laps, from memory); check the unit (mm2) and the width")

    span = None
    if "span" in body:
        span = _span(s, body["span"], f"{path}.span")

    column_size = position = span_x = span_y = None
    if kind == "flat-slab column connection":
        raw = body["column_size"]
        if not isinstance(raw, list) or len(raw) != 2:
            raise s.error(f"{path}.column_size",
                          f"expected two numbers [c1, c2] in mm, got {_describe(raw)}")
        column_size = tuple(s.number(v, f"{path}.column_size[{i}]", 100.0, 3000.0, "mm", True)
                            for i, v in enumerate(raw))
        position = s.text(body["position"], f"{path}.position", COLUMN_POSITIONS)
        span_x = _span(s, body["span_x"], f"{path}.span_x")
        span_y = _span(s, body["span_y"], f"{path}.span_y")

    tributary_width = slab_depth = None
    if "tributary_width" in body:
        tributary_width = _span(s, body["tributary_width"], f"{path}.tributary_width")
    if "slab_depth" in body:
        slab_depth = s.number(body["slab_depth"], f"{path}.slab_depth", 50.0, depth, "mm", True,
                              hint=" (the slab depth is in mm and at most the beam depth)")

    target_beta, reason = _target_override(s, body, path)
    continuity = _continuity(s, body, path, depth=depth, cover=cover, width=width)
    if continuity.get("continuous") and body.get("tension_face", "bottom") != "bottom":
        raise s.error(f"{path}.tension_face",
                      "a continuous member's main bars are its bottom (span) bars, with the "
                      "top bars over the supports given by top_bar_diameter; set "
                      'tension_face = "bottom" or leave it out')
    return Member(
        member_id=member_id,
        zone=zone,
        kind=kind,
        depth=depth,
        cover=cover,
        bar_diameter=bar_diameter,
        width=width,
        span=span,
        bar_spacing=bar_spacing,
        steel_area=steel_area,
        shear_reinforcement=s.boolean(body.get("shear_reinforcement", False),
                                      f"{path}.shear_reinforcement"),
        tension_face=s.text(body.get("tension_face", "bottom"), f"{path}.tension_face",
                            TENSION_FACES),
        column_size=column_size,
        position=position,
        span_x=span_x,
        span_y=span_y,
        tributary_width=tributary_width,
        slab_depth=slab_depth,
        target_beta=target_beta,
        target_beta_reason=reason,
        **continuity,
    )


def _continuity(s: _Schema, body: dict, path: str, *, depth: float, cover: float,
                width: float) -> dict:
    """The continuity keys of a slab or beam, checked (see docs/data-formats.md)."""
    out: dict[str, Any] = {}
    continuous = s.boolean(body.get("continuous", False), f"{path}.continuous")
    out["continuous"] = continuous
    for key in ("span_count", "span_position"):
        if key in body and not continuous:
            raise s.error(f"{path}.{key}", f"'{key}' describes a continuous member; set "
                                           "continuous = true or leave it out")
    if continuous:
        for key, what in (("span_count", "the number of equal spans of the run (>= 2)"),
                          ("span_position", '"end" or "interior"')):
            if key not in body:
                raise s.error(f"{path}.{key}", f"a continuous member needs '{key}': {what}")
        count = s.integer(body["span_count"], f"{path}.span_count", 2, MAX_SPAN_COUNT)
        position = s.text(body["span_position"], f"{path}.span_position", SPAN_POSITIONS)
        if position == "interior" and count < 3:
            raise s.error(f"{path}.span_position",
                          f'a run of {count} spans has no interior span; use "end" or raise '
                          "span_count")
        out["span_count"], out["span_position"] = count, position
    has_top = [k for k in ("top_bar_diameter", "top_bar_spacing", "top_steel_area", "top_cover")
               if k in body]
    if continuous and "top_bar_diameter" not in body:
        raise s.error(f"{path}.top_bar_diameter",
                      "a continuous member has a hogging mode over its supports and needs its "
                      "top bars: give top_bar_diameter [mm] with top_bar_spacing [mm] (slabs) "
                      "or top_steel_area [mm2] (beams)")
    if not has_top:
        return out
    if "top_bar_diameter" not in body:
        raise s.error(f"{path}.top_bar_diameter",
                      f"'{has_top[0]}' is given without top_bar_diameter [mm]")
    phi = s.number(body["top_bar_diameter"], f"{path}.top_bar_diameter", 3.0, 50.0, "mm", True)
    has_spacing, has_area = "top_bar_spacing" in body, "top_steel_area" in body
    if has_spacing == has_area:
        which = "both" if has_spacing else "neither"
        raise s.error(f"{path}.top_bar_spacing",
                      "give exactly one of 'top_bar_spacing' [mm] or 'top_steel_area' [mm2] "
                      f"with top_bar_diameter; found {which}")
    top_cover = None
    if "top_cover" in body:
        top_cover = s.number(body["top_cover"], f"{path}.top_cover", 0.0, 200.0, "mm")
    used_cover = cover if top_cover is None else top_cover
    if used_cover + phi >= depth:
        raise s.error(f"{path}.top_cover" if top_cover is not None else f"{path}.top_bar_diameter",
                      f"top cover + top bar diameter ({used_cover + phi:g} mm) must be smaller "
                      f"than the depth ({depth:g} mm)")
    if has_spacing:
        spacing = s.number(body["top_bar_spacing"], f"{path}.top_bar_spacing", phi, 1000.0, "mm",
                           hint=" (must exceed the top bar diameter)")
        area = 3.141592653589793 * phi ** 2 / 4.0 * width / spacing
        out["top_bar_spacing"] = spacing
    else:
        area = s.number(body["top_steel_area"], f"{path}.top_steel_area", 0.0, 1.0e6, "mm2")
        out["top_steel_area"] = area
    ratio = area / (width * depth)
    if ratio > MAX_REINFORCEMENT_RATIO:
        key = "top_steel_area" if has_area else "top_bar_spacing"
        raise s.error(f"{path}.{key}",
                      f"top steel of {area:.6g} mm2 is {100 * ratio:.3g} % of the section "
                      f"{width:g} x {depth:g} mm; at most {100 * MAX_REINFORCEMENT_RATIO:g} % "
                      "is plausible; check the unit (mm2) and the width")
    out["top_bar_diameter"], out["top_cover"] = phi, top_cover
    return out


SAMPLING_FITS = ("materials", "chloride", "carbonation", "corrosion")
"""Kinds of MCMC fit that a ``[sampling.<fit>]`` table may set."""
SAMPLING_KEYS = ("verdict_calls",)
"""Plain keys of the ``[sampling]`` table beside its ``[sampling.<fit>]`` tables."""
MAX_VERDICT_CALLS = 10**8
"""Largest budget of limit-state calls per member verdict [-] (the same bound as the
command line's ``--verdict-calls``)."""


def _verdict_calls(s: _Schema, table: dict) -> int | None:
    """``[sampling] verdict_calls``: a whole number from 0 (one run, never repeated) up."""
    if "verdict_calls" not in table:
        return None
    return s.integer(table["verdict_calls"], "sampling.verdict_calls", 0, MAX_VERDICT_CALLS)


def _sampling(s: _Schema, table: dict) -> Mapping[str, Mapping[str, Any]]:
    """``[sampling.<fit>]``: draws, tune, chains (whole numbers), target_accept, sampler."""
    s.keys(table, "sampling", (), SAMPLING_FITS + SAMPLING_KEYS)
    out = {}
    for fit, body in table.items():
        if fit in SAMPLING_KEYS:
            continue
        path = f"sampling.{fit}"
        body = s.table(body, path)
        s.keys(body, path, (), ("draws", "tune", "chains", "target_accept", "sampler"))
        values: dict[str, Any] = {}
        for key, low, high in (("draws", 100, 100_000), ("tune", 0, 100_000), ("chains", 1, 16)):
            if key in body:
                values[key] = s.integer(body[key], f"{path}.{key}", low, high)
        if "target_accept" in body:
            values["target_accept"] = s.number(body["target_accept"], f"{path}.target_accept",
                                               0.5, 0.999, "[-]")
        if "sampler" in body:
            values["sampler"] = s.text(body["sampler"], f"{path}.sampler", ("pymc", "nutpie"))
        out[fit] = MappingProxyType(values)
    return MappingProxyType(out)


def _exclude(s: _Schema, table: dict) -> Mapping[str, str]:
    """``[exclude]``: ``"<test id>" = "<reason>"``, the reason a non-empty text."""
    return MappingProxyType({str(item): s.text(reason, f"exclude.{quote_cell(str(item), 80)}")
                             for item, reason in table.items()})


# --------------------------------------------------------------------------- public
def load_site(path: str | Path) -> Site:
    """Read and check a site file.

    Parameters
    ----------
    path : str or Path
        The ``site.toml`` file, or the site folder holding it.

    Returns
    -------
    Site
        Frozen dataclasses for ``[site]``, ``[target]``, ``[materials]``, ``[loads]``,
        ``[zones.*]``, ``[members.*]`` and the optional ``[priors]``.

    Raises
    ------
    InputError
        Malformed TOML (with the parser's line and column), a missing or unknown key, a value
        of the wrong type or out of range, a member referring to an undefined zone. The error
        names the file and the dotted key path (``members.S1-03.span``).
    """
    path = Path(path)
    if path.is_dir():
        path = path / "site.toml"
    data = _read_toml(path)
    s = _Schema(path)
    s.keys(data, "", ("site", "target", "materials", "loads", "zones"),
           ("members", "priors", "sampling", "exclude"))
    sections = {name: s.table(data[name], name) for name in data}
    zones = _zones(s, sections["zones"])
    members = {}
    for member_id, body in sections.get("members", {}).items():
        members[member_id] = _member(s, member_id,
                                     s.table(body, f"members.{quote_cell(member_id, 80)}"), zones)
    if not members:
        raise s.error("members", "the site file has no member: add at least one "
                                 "[members.<id>] table (a slab, a beam or a flat-slab column "
                                 "connection) to assess")
    return Site(
        path=path,
        site=_site_info(s, sections["site"]),
        target=_target(s, sections["target"]),
        materials=_materials(s, sections["materials"]),
        loads=_loads(s, sections["loads"]),
        zones=MappingProxyType(zones),
        members=MappingProxyType(members),
        priors=_priors(s, sections["priors"]) if "priors" in sections else Priors(),
        sampling=_sampling(s, sections["sampling"]) if "sampling" in sections
        else MappingProxyType({}),
        verdict_calls=_verdict_calls(s, sections["sampling"]) if "sampling" in sections
        else None,
        exclude=_exclude(s, sections["exclude"]) if "exclude" in sections
        else MappingProxyType({}),
    )


def load_campaign(path: str | Path) -> CampaignInfo:
    """Read and check a ``campaign.toml`` (keys ``name``, ``date``, ``description``).

    Parameters
    ----------
    path : str or Path
        The ``campaign.toml`` file, or the campaign folder holding it.

    Raises
    ------
    InputError
        Malformed TOML, a missing or unknown key, or a value of the wrong type.
    """
    path = Path(path)
    if path.is_dir():
        path = path / "campaign.toml"
    data = _read_toml(path)
    s = _Schema(path)
    s.keys(data, "", ("name", "date"), ("description",))
    return CampaignInfo(
        name=s.text(data["name"], "name"),
        date=s.date(data["date"], "date"),
        description=_optional_text(s, data.get("description", ""), "description"),
    )


__all__ = [
    "CAR_PARK_USES",
    "EN206_EXPOSURE",
    "EN206_OTHER_CLASSES",
    "EXPOSURES",
    "MEMBER_KINDS",
    "SPAN_POSITIONS",
    "TARGET_BETA_RANGE",
    "CampaignInfo",
    "Loads",
    "Materials",
    "Member",
    "Priors",
    "Site",
    "SiteInfo",
    "Target",
    "Zone",
    "load_campaign",
    "load_site",
]
