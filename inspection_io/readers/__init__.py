"""Read campaign files (CSV or XLSX) into canonical observations.

One file holds one kind of record (cores, tensile, cover, carbonation,
chloride, halfcell, section_loss), detected from its headers or given. The
file contract is ``docs/data-formats.md``. Any problem raises
`inspection_io.errors.InputError` naming file, row and column; nothing partial
is returned.
"""

from __future__ import annotations

from collections.abc import Collection, Iterable, Mapping
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from inspection_io import screening, units
from inspection_io.console_text import quote_cell
from inspection_io.cores import CoreCorrections
from inspection_io.errors import InputError
from inspection_io.readers import (
    carbonation,
    chloride,
    cores,
    cover,
    halfcell,
    section_loss,
    tensile,
)
from inspection_io.readers._common import Context, KindSpec, parse_rows, resolve_columns
from inspection_io.tables import Header, load_table, parse_header

__all__ = ["KINDS", "OBSERVATION_COLUMNS", "ReadResult", "detect_kind", "read_campaign_file"]

SPECS: dict[str, KindSpec] = {module.SPEC.kind: module.SPEC for module in
                              (cores, tensile, cover, carbonation, chloride, halfcell,
                               section_loss)}
#: Record kinds in the order of the file contract.
KINDS = tuple(SPECS)
#: Columns of `ReadResult.observations`, in order.
OBSERVATION_COLUMNS = ("source_row", "item_id", "zone", "member", "date", "quantity", "value",
                       "unit", "flags", "extra")


@dataclass
class ReadResult:
    """What one campaign file holds.

    Attributes
    ----------
    kind : str
        Record kind (``"cores"``, ``"cover"``, ...).
    observations : pandas.DataFrame
        One row per measured value, columns `OBSERVATION_COLUMNS`: ``value`` in
        the canonical ``unit``; ``flags`` ``;``-joined screening flags (``""``
        if none); ``extra`` a JSON string of per-row details.
    raw : pandas.DataFrame
        Raw cells as strings under the file's own headers, plus ``source_row``.
    metadata : dict
        File name, format, sheet used and ignored sheets, raw headers, units
        per column, conversions applied, ignored columns, core corrections.
    """

    kind: str
    observations: pd.DataFrame
    raw: pd.DataFrame
    metadata: dict = field(default_factory=dict)


def _names(headers: Iterable[str | Header]) -> list[str]:
    names = []
    for header in headers:
        if isinstance(header, Header):
            names.append(header.name)
        elif str(header).strip():
            try:
                names.append(parse_header(str(header)).name)
            except InputError:
                names.append(str(header).strip().lower())
    return names


def detect_kind(headers: Iterable[str | Header], *, file: str | Path | None = None) -> str:
    """Record kind identified by the headers.

    Parameters
    ----------
    headers : iterable of str or Header
        Header texts as in the file (``"Core ID"``, ``"diameter [mm]"``) or parsed headers.
    file : str or Path, optional
        Named in the error message.

    Raises
    ------
    InputError
        No kind or several kinds match; the message lists what identifies each kind.
    """
    names = set(_names(headers))
    matches = [kind for kind, spec in SPECS.items() if set(spec.identifying) <= names]
    if len(matches) == 1:
        return matches[0]
    rules = "; ".join(f"{kind}: {' + '.join(spec.identifying)}" for kind, spec in SPECS.items())
    if not matches:
        raise InputError(f"cannot tell the record kind from the headers "
                         f"({', '.join(quote_cell(n) for n in sorted(names)) or 'none'}); columns "
                         f"that identify each "
                         f"kind: {rules}", file=file, row=1)
    raise InputError(f"the headers fit several kinds ({', '.join(matches)}); keep one kind per "
                     f"file or give the kind explicitly. Identifying columns: {rules}",
                     file=file, row=1)


def read_campaign_file(path: str | Path, kind: str | None = None, *,
                       binder_content: float | None = None,
                       concrete_density: float | None = None,
                       known_zones: Collection[str] | None = None,
                       known_members: Collection[str] | Mapping[str, str] | None = None,
                       member_depths: Mapping[str, float] | None = None,
                       core_corrections: CoreCorrections | None = None,
                       outlier_alpha: float = screening.OUTLIER_ALPHA) -> ReadResult:
    """Read and check one campaign file.

    Parameters
    ----------
    path : str or Path
        CSV or XLSX campaign file.
    kind : str, optional
        One of `KINDS`; detected from the headers when omitted.
    binder_content : float, optional
        Site binder content [kg/m3], needed for chloride in ``% concrete``.
    concrete_density : float, optional
        Site concrete density [kg/m3], needed for chloride in ``% concrete``.
    known_zones : collection of str, optional
        Zone ids of the site file; other zones are an error.
    known_members : collection of str or mapping member -> zone, optional
        Member ids of the site file; with a mapping the member's zone is checked too.
    member_depths : mapping member -> overall depth [mm], optional
        From the site file: a cover not smaller than the row's member depth, or a
        carbonation depth or chloride increment deeper than it, is refused
        (`inspection_io.plausibility.within_member_depth`).
    core_corrections : CoreCorrections, optional
        Factor sets for core -> in-situ strength (default: all on, see
        `inspection_io.cores`).
    outlier_alpha : float
        Significance level of the zone-wise Grubbs outlier test on cores [-].

    Returns
    -------
    ReadResult
        ``metadata["number_format"]`` states the file's detected number convention
        (decimal point or comma, thousands separator, and the evidence).

    Raises
    ------
    InputError
        Anything wrong, naming file, row and column: a file beyond the size limits of
        `inspection_io.tables`, a cell that is not a number in the file's convention
        (`inspection_io.number_text`), a value outside its hard plausibility range
        (`inspection_io.plausibility`; values outside the soft range are kept and
        flagged ``unusual <quantity>``).
    """
    path = Path(path)
    if kind is not None and kind not in SPECS:
        raise InputError(f"unknown record kind {kind!r}; choose one of {', '.join(KINDS)}",
                         file=path, column="kind")
    table = load_table(path, preferred_sheets=[kind] if kind else KINDS)
    detected = kind is None
    kind = kind or detect_kind(table.headers, file=path)
    spec = SPECS[kind]
    context = Context(table=table, spec=spec, binder_content=binder_content,
                      concrete_density=concrete_density, known_zones=known_zones,
                      known_members=known_members, member_depths=member_depths,
                      options={"core_corrections": core_corrections or CoreCorrections(),
                               "outlier_alpha": outlier_alpha})
    resolve_columns(context)
    records = parse_rows(context)
    observations = pd.DataFrame.from_records(records, columns=list(OBSERVATION_COLUMNS))
    observations = observations.astype({"source_row": "int64", "value": "float64"})
    for name in ("member", "date"):
        observations[name] = observations[name].astype(object).where(
            observations[name].notna(), None)
    return ReadResult(kind=kind, observations=observations, raw=table.to_frame(),
                      metadata=_metadata(context, detected))


def _metadata(context: Context, detected: bool) -> dict:
    table, spec = context.table, context.spec
    known = {c.name for c in spec.all_columns()}
    metadata = {
        "file": table.path.name,
        "path": str(table.path),
        "format": table.file_format,
        "sheet": table.sheet,
        "ignored_sheets": list(table.ignored_sheets),
        "delimiter": table.delimiter,
        "kind": spec.kind,
        "kind_detected": detected,
        "raw_headers": [h.raw for h in table.headers],
        "units": {h.raw: h.unit for h in table.headers},
        "canonical_units": {name: units.canonical_label(c.dimension)
                            for c in spec.all_columns() if c.dimension
                            for name in [c.name] if name in context.headers},
        "conversions": list(context.conversions),
        "ignored_columns": [h.raw for h in table.headers if h.name not in known],
        "n_rows": len(table.rows),
        "number_format": (context.number_format.to_dict() if context.number_format
                          else None),
    }
    if spec.kind == "cores":
        metadata["core_corrections"] = context.options["core_corrections"].to_dict()
        metadata["outlier_test"] = screening.outlier_test_description(
            context.options["outlier_alpha"])
    return metadata
