"""A small builder for self-contained HTML assessment reports.

A `ReportDocument` holds a title, free metadata, document-level warnings and
numbered sections. A `Section` takes paragraphs, key-value blocks, tables (from
lists of dicts or pandas DataFrames), figures (matplotlib `Figure` objects,
embedded as base64 PNG data URIs) and notice boxes. `ReportDocument.to_html`
renders one HTML file with inline CSS and no external resource, so the report
opens the same way offline, from an e-mail attachment or from an archive.

All text is escaped with `html.escape`; nothing given by the caller is ever
inserted as markup. The standing caution (`assess.cautions.CAUTION`) is shown
in a box right under the title and again at the end of the report.
"""

from __future__ import annotations

import base64
import dataclasses
import datetime as _dt
import html
import math
import numbers
import re
import sys
from collections.abc import Callable, Iterable, Mapping, Sequence
from typing import Any, Union

import numpy as np

import assess
from assess.cautions import CAUTION
from assess.errors import InputError

#: Text shown for a missing, NaN or undefined value in tables and key-value blocks.
MISSING_TEXT = "\u2013"

#: Default number format: four significant digits keeps pf such as 1.234e-05 readable.
DEFAULT_FLOAT_FORMAT = ".4g"

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"

Formatter = Union[str, Callable[[Any], str]]


#: Colour-blind-safe tones of verdict tags (Okabe & Ito 2008, "Color universal design",
#: https://jfly.uni-koeln.de/color/): blue, vermillion, orange, grey. A tag always
#: carries its word and a symbol beside the colour.
TONES = {"good": ("#0072B2", "\u2714"), "bad": ("#D55E00", "\u2716"),
         "unsure": ("#E69F00", "?"), "none": ("#999999", "\u2013")}


@dataclasses.dataclass(frozen=True)
class Tag:
    """A word shown with a coloured mark and a symbol in a table cell (e.g. a verdict).

    Attributes
    ----------
    text : str
        The word(s) shown; the colour is never the only carrier of the meaning.
    tone : {"good", "bad", "unsure", "none"}
        Colour and symbol (`TONES`).
    """

    text: str
    tone: str = "none"

    def __post_init__(self):
        if self.tone not in TONES:
            raise InputError(f"tag tone must be one of {', '.join(TONES)}, got {self.tone!r}",
                             column="tone")

    def __str__(self) -> str:
        return self.text


def format_value(value: Any, fmt: Formatter | None = None) -> str:
    """Plain text for one value in a table cell or key-value block.

    Parameters
    ----------
    value : any
        None and NaN give an en dash; booleans give "yes"/"no"; +-inf give the
        infinity sign; floats use `fmt` (a format spec such as ``".2f"`` or a
        callable), default ``".4g"``; dates use ISO 8601.
    fmt : str or callable, optional
        Format spec or function applied to numbers.

    Returns
    -------
    str
        Unescaped text (escaping happens when the HTML is rendered).
    """
    if isinstance(value, np.generic):
        value = value.item()
    if value is None:
        return MISSING_TEXT
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, numbers.Real) and not isinstance(value, numbers.Integral):
        number = float(value)
        if math.isnan(number):
            return MISSING_TEXT
        if math.isinf(number):
            return "\u221e" if number > 0 else "\u2212\u221e"
        if callable(fmt):
            return str(fmt(number))
        return format(number, fmt or DEFAULT_FLOAT_FORMAT)
    if isinstance(value, numbers.Integral):
        return str(fmt(value)) if callable(fmt) else str(value)
    if isinstance(value, (_dt.datetime, _dt.date)):
        return value.isoformat()
    if callable(fmt):
        return str(fmt(value))
    text = str(value)
    if text.lower() == "nat":
        return MISSING_TEXT
    return text


def _is_number(value: Any) -> bool:
    if isinstance(value, np.generic):
        value = value.item()
    return isinstance(value, numbers.Real) and not isinstance(value, bool)


def _esc(text: Any) -> str:
    return html.escape(str(text), quote=True)


def _slug(text: str, used: set[str]) -> str:
    base = re.sub(r"[^a-z0-9]+", "-", text.lower()).strip("-") or "section"
    slug, n = base, 2
    while slug in used:
        slug, n = f"{base}-{n}", n + 1
    used.add(slug)
    return slug


class _Counters:
    """Running figure and table numbers while one document is rendered."""

    def __init__(self) -> None:
        self.figure = 0
        self.table = 0


@dataclasses.dataclass(frozen=True)
class _Paragraph:
    text: str

    def render(self, counters: _Counters) -> str:
        return f"<p>{_esc(self.text)}</p>"


@dataclasses.dataclass(frozen=True)
class _KeyValues:
    items: tuple[tuple[str, str], ...]
    caption: str | None

    def render(self, counters: _Counters) -> str:
        rows = "".join(f"<tr><th scope=\"row\">{_esc(k)}</th><td>{_esc(v)}</td></tr>"
                       for k, v in self.items)
        caption = f"<caption>{_esc(self.caption)}</caption>" if self.caption else ""
        return f"<table class=\"kv\">{caption}<tbody>{rows}</tbody></table>"


def _tag_html(text: str, tone: str) -> str:
    colour, symbol = TONES[tone]
    return (f"<span class=\"tag tone-{tone}\" style=\"border-color:{colour}\">"
            f"<span class=\"mark\" style=\"background:{colour}\" aria-hidden=\"true\">"
            f"{_esc(symbol)}</span> {_esc(text)}</span>")


@dataclasses.dataclass(frozen=True)
class _Table:
    columns: tuple[str, ...]
    cells: tuple[tuple[tuple[str, bool, str | None], ...], ...]  # (text, is_number, tone)
    caption: str | None
    marked: tuple[bool, ...] = ()
    mark_note: str = ""

    def render(self, counters: _Counters) -> str:
        counters.table += 1
        label = f"Table {counters.table}"
        caption = f"{label}: {self.caption}" if self.caption else label
        if any(self.marked) and self.mark_note:
            caption += f" (rows marked \u25b6: {self.mark_note})"
        numeric = [bool(self.cells) and all(is_num or t == MISSING_TEXT for t, is_num, _ in
                                            (row[j] for row in self.cells))
                   for j in range(len(self.columns))]
        head = "".join(f"<th scope=\"col\" class=\"num\">{_esc(c)}</th>" if is_num
                       else f"<th scope=\"col\">{_esc(c)}</th>"
                       for c, is_num in zip(self.columns, numeric))

        def cell(t, is_num, tone, first, marked):
            text = _tag_html(t, tone) if tone else _esc(t)
            if first and marked:
                text = "<span class=\"row-mark\">\u25b6</span> " + text
            return f"<td class=\"num\">{text}</td>" if is_num else f"<td>{text}</td>"

        marks = self.marked or (False,) * len(self.cells)
        body = "".join(
            ("<tr class=\"marked\">" if marked else "<tr>")
            + "".join(cell(t, is_num, tone, j == 0, marked)
                      for j, (t, is_num, tone) in enumerate(row)) + "</tr>"
            for row, marked in zip(self.cells, marks))
        return (f"<div class=\"table-wrap\"><table class=\"data\"><caption>{_esc(caption)}</caption>"
                f"<thead><tr>{head}</tr></thead><tbody>{body}</tbody></table></div>")


@dataclasses.dataclass(frozen=True)
class _Figure:
    png: bytes
    caption: str
    width_px: int

    def render(self, counters: _Counters) -> str:
        counters.figure += 1
        label = f"Figure {counters.figure}: {self.caption}"
        data = base64.b64encode(self.png).decode("ascii")
        return (f"<figure><img src=\"data:image/png;base64,{data}\" alt=\"{_esc(self.caption)}\" "
                f"style=\"max-width:min(100%, {self.width_px}px)\">"
                f"<figcaption>{_esc(label)}</figcaption></figure>")


@dataclasses.dataclass(frozen=True)
class _Notice:
    title: str
    messages: tuple[str, ...]
    kind: str  # "caution" or "warning"

    def render(self, counters: _Counters) -> str:
        return _notice_html(self.title, self.messages, self.kind)


def _notice_html(title: str, messages: Sequence[str], kind: str) -> str:
    if len(messages) == 1:
        body = f"<p>{_esc(messages[0])}</p>"
    else:
        body = "<ul>" + "".join(f"<li>{_esc(m)}</li>" for m in messages) + "</ul>"
    return (f"<aside class=\"notice {kind}\" role=\"note\">"
            f"<p class=\"notice-title\">{_esc(title)}</p>{body}</aside>")


class Section:
    """One numbered part of a report; its ``add_*`` methods return the section.

    Parameters
    ----------
    heading : str
        Plain-text heading (numbered automatically when rendered).
    """

    def __init__(self, heading: str, *, _level: int = 2) -> None:
        self.heading = str(heading)
        self.level = _level
        self.blocks: list[Any] = []

    def add_paragraph(self, text: str) -> Section:
        """Add a paragraph of plain text."""
        self.blocks.append(_Paragraph(str(text)))
        return self

    def add_key_values(self, items: Mapping[str, Any] | Iterable[tuple[str, Any]], *,
                       caption: str | None = None,
                       formats: Mapping[str, Formatter] | None = None) -> Section:
        """Add a two-column block of labels and values (units belong in the labels).

        Parameters
        ----------
        items : mapping or iterable of (label, value)
            Values are formatted with `format_value`.
        caption : str, optional
            Short title above the block.
        formats : mapping, optional
            Format spec or callable per label.
        """
        pairs = items.items() if isinstance(items, Mapping) else items
        formats = formats or {}
        rendered = tuple((str(k), format_value(v, formats.get(k))) for k, v in pairs)
        self.blocks.append(_KeyValues(rendered, caption))
        return self

    def add_table(self, rows: Any, *, columns: Sequence[str] | None = None,
                  caption: str | None = None,
                  formats: Mapping[str, Formatter] | None = None,
                  index: bool | None = None, marked: Sequence[bool] | None = None,
                  mark_note: str = "below target") -> Section:
        """Add a numbered table from a list of dicts or a pandas DataFrame.

        Parameters
        ----------
        rows : list of dict or pandas.DataFrame
            One dict (or DataFrame row) per table row. Keys missing from a row
            show as an en dash.
        columns : sequence of str, optional
            Columns to show, in order. Default: the DataFrame's columns, or
            every key in order of first appearance.
        caption : str, optional
            Caption after "Table N:". Put units in the column names, e.g.
            ``"beta [-]"``, ``"cover [mm]"``.
        formats : mapping, optional
            Format spec (``".2f"``) or callable per column for numbers.
        index : bool, optional
            For a DataFrame, show its index as the first column(s). Default:
            only when the index is not a plain 0..n-1 range.
        marked : sequence of bool, optional
            One per row: rows to mark (a tinted background and a \u25b6 sign in
            the first cell, never colour alone), e.g. members below target.
        mark_note : str, default "below target"
            What a marked row means, added to the caption when a row is marked.

        A `Tag` value is shown as its word with a coloured mark and a symbol.
        """
        records, default_columns = _records(rows, index)
        columns = tuple(str(c) for c in (columns if columns is not None else default_columns))
        formats = formats or {}
        cells = tuple(
            tuple((format_value(rec.get(c), formats.get(c)),
                   _is_number(rec.get(c)),
                   rec.get(c).tone if isinstance(rec.get(c), Tag) else None) for c in columns)
            for rec in records)
        flags = tuple(bool(m) for m in marked) if marked is not None else ()
        if flags and len(flags) != len(cells):
            raise InputError(f"marked needs one entry per row ({len(cells)}), got {len(flags)}",
                             column="marked")
        self.blocks.append(_Table(columns, cells, caption, flags, str(mark_note)))
        return self

    def add_figure(self, figure: Any, *, caption: str, dpi: int = 110,
                   close: bool = True) -> Section:
        """Embed a matplotlib Figure as a base64 PNG with a numbered caption.

        Parameters
        ----------
        figure : matplotlib.figure.Figure
            The figure to render.
        caption : str
            Caption after "Figure N:"; also the image's alt text.
        dpi : int, default 110
            Resolution of the embedded PNG [dots per inch].
        close : bool, default True
            Close the figure in pyplot afterwards (if pyplot manages it), so
            building a long report does not keep every figure in memory.
        """
        if not hasattr(figure, "savefig"):
            raise InputError(f"add_figure expects a matplotlib Figure, got {type(figure).__name__}.",
                             column="figure")
        from assess.report.figure_cache import render_png

        png = render_png(figure, dpi)
        width_px = int(round(figure.get_figwidth() * dpi))
        pyplot = sys.modules.get("matplotlib.pyplot")  # only pyplot-made figures need closing
        if close and pyplot is not None:
            pyplot.close(figure)
        self.blocks.append(_Figure(png, str(caption), width_px))
        return self

    def add_png(self, png: bytes, *, caption: str) -> Section:
        """Embed a PNG image (e.g. `assess.report.figure_cache.png_of`) with a numbered
        caption, shown at most at its own width [px]."""
        from assess.report.figure_cache import png_width

        try:
            width_px = png_width(bytes(png))
        except ValueError:
            raise InputError("add_png expects the bytes of a PNG image.", column="png") from None
        self.blocks.append(_Figure(bytes(png), str(caption), width_px))
        return self

    def add_notice(self, messages: str | Sequence[str], *, title: str = "Note",
                   kind: str = "warning") -> Section:
        """Add a boxed notice (warnings about the run, or a caution).

        Parameters
        ----------
        messages : str or sequence of str
            One message, or several shown as a list.
        title : str, default "Note"
            Bold first line of the box.
        kind : {"warning", "caution"}
            Visual style of the box.
        """
        if kind not in ("warning", "caution"):
            raise InputError(f"notice kind must be 'warning' or 'caution', got {kind!r}.",
                             column="kind")
        msgs = (messages,) if isinstance(messages, str) else tuple(str(m) for m in messages)
        if msgs:
            self.blocks.append(_Notice(str(title), msgs, kind))
        return self

    def add_subsection(self, heading: str) -> Section:
        """Add and return a sub-section (numbered 1.1, 1.2, ...)."""
        sub = Section(heading, _level=min(self.level + 1, 4))
        self.blocks.append(sub)
        return sub

    def render(self, counters: _Counters, number: str, used_ids: set[str]) -> str:
        anchor = _slug(f"s{number}-{self.heading}", used_ids)
        parts = [f"<section id=\"{anchor}\"><h{self.level}>"
                 f"<span class=\"num\">{_esc(number)}</span> {_esc(self.heading)}</h{self.level}>"]
        sub_number = 0
        for block in self.blocks:
            if isinstance(block, Section):
                sub_number += 1
                parts.append(block.render(counters, f"{number}.{sub_number}", used_ids))
            else:
                parts.append(block.render(counters))
        parts.append("</section>")
        return "".join(parts)


def _records(rows: Any, index: bool | None) -> tuple[list[dict], list[str]]:
    """Rows as a list of dicts with string keys, and the default column order."""
    if hasattr(rows, "to_dict") and hasattr(rows, "columns"):  # pandas DataFrame
        frame = rows
        if index is None:
            import pandas as pd

            index = not (isinstance(frame.index, pd.RangeIndex) and frame.index.name is None
                         and frame.index.start == 0 and frame.index.step == 1)
        if index:
            frame = frame.reset_index()
        columns = [str(c) for c in frame.columns]
        records = [{str(k): v for k, v in rec.items()} for rec in frame.to_dict("records")]
        return records, columns
    if isinstance(rows, Mapping) or isinstance(rows, (str, bytes)):
        raise InputError("add_table expects a list of dicts or a pandas DataFrame, "
                         f"got {type(rows).__name__}.", column="rows")
    records, columns, seen = [], [], set()
    for i, rec in enumerate(rows):
        if not isinstance(rec, Mapping):
            raise InputError(f"table row {i} must be a dict of column -> value, "
                             f"got {type(rec).__name__}.", column=f"rows[{i}]")
        clean = {str(k): v for k, v in rec.items()}
        for key in clean:
            if key not in seen:
                seen.add(key)
                columns.append(key)
        records.append(clean)
    return records, columns


_CSS = """
:root { --ink:#1b1f24; --muted:#5a6470; --rule:#c9ced4; --soft:#f3f5f7; --accent:#2b4c6f; }
* { box-sizing: border-box; }
html { background: #e9ecef; }
body { margin: 0; color: var(--ink); font: 15px/1.5 "Segoe UI", "Helvetica Neue", Arial, "Liberation Sans", sans-serif; }
.page { max-width: 980px; margin: 24px auto; background: #fff; padding: 36px 48px 28px; border: 1px solid var(--rule); }
header { border-bottom: 3px solid var(--accent); padding-bottom: 12px; margin-bottom: 18px; }
h1 { font-size: 26px; line-height: 1.25; margin: 0 0 4px; font-weight: 600; }
.subtitle { margin: 0 0 12px; color: var(--muted); font-size: 16px; }
h2 { font-size: 20px; margin: 30px 0 10px; padding-bottom: 4px; border-bottom: 1px solid var(--rule); font-weight: 600; }
h3 { font-size: 17px; margin: 22px 0 8px; font-weight: 600; }
h4 { font-size: 15px; margin: 18px 0 6px; font-weight: 600; }
h2 .num, h3 .num, h4 .num { color: var(--accent); margin-right: 6px; }
p { margin: 8px 0; }
table { border-collapse: collapse; font-size: 14px; }
caption { text-align: left; font-weight: 600; padding: 4px 0; color: var(--ink); }
table.kv { margin: 8px 0 14px; }
table.kv th { text-align: left; font-weight: normal; color: var(--muted); padding: 2px 24px 2px 0; vertical-align: top; }
table.kv td { padding: 2px 0; }
.table-wrap { overflow-x: auto; margin: 10px 0 18px; }
table.data { width: 100%; }
table.data th { text-align: left; background: var(--soft); border-top: 1.5px solid var(--ink); border-bottom: 1px solid var(--ink); padding: 5px 10px; font-weight: 600; }
table.data td { padding: 4px 10px; border-bottom: 1px solid #e4e7ea; }
table.data tbody tr:last-child td { border-bottom: 1.5px solid var(--ink); }
table.data td.num, table.data th.num { text-align: right; font-variant-numeric: tabular-nums; }
table.data tr.marked td { background: #fbe9df; }
table.data tr.marked td:first-child { box-shadow: inset 4px 0 0 #D55E00; font-weight: 600; }
.row-mark { color: #D55E00; }
.tag { display: inline-block; white-space: nowrap; border: 1.5px solid; border-radius: 3px; padding: 0 6px 0 0; font-weight: 600; }
.tag .mark { display: inline-block; min-width: 1.4em; text-align: center; color: #fff; margin-right: 2px; }
table.data td:first-child { white-space: nowrap; }
figure { margin: 16px 0 22px; text-align: center; }
figure img { display: block; margin: 0 auto; height: auto; }
figcaption { font-size: 14px; color: var(--muted); margin-top: 6px; }
.notice { border: 1px solid; border-left-width: 6px; padding: 8px 14px; margin: 14px 0; }
.notice p, .notice ul { margin: 4px 0; }
.notice ul { padding-left: 20px; }
.notice .notice-title { font-weight: 700; margin-top: 2px; }
.notice.caution { background: #fff8e6; border-color: #b58a1b; }
.notice.warning { background: #f4f6f8; border-color: #6b7785; }
nav.contents { margin: 18px 0 8px; }
nav.contents p { font-weight: 700; margin-bottom: 2px; }
nav.contents ol { margin: 0; padding-left: 22px; }
nav.contents a { color: var(--accent); text-decoration: none; }
footer { margin-top: 34px; border-top: 1px solid var(--rule); padding-top: 6px; }
.colophon { color: var(--muted); font-size: 13px; }
@media print {
  html { background: #fff; }
  .page { margin: 0; border: none; padding: 0; max-width: none; }
  figure, table, .notice { page-break-inside: avoid; }
  h2, h3 { page-break-after: avoid; }
}
"""


class ReportDocument:
    """An assessment report: title, metadata, warnings and numbered sections.

    Parameters
    ----------
    title : str
        Report title (e.g. the site name and "structural reliability assessment").
    subtitle : str, optional
        Line under the title (e.g. the campaign covered).
    metadata : mapping, optional
        Label -> value pairs shown under the title (site, prepared by, ...).
    caution : str, default `assess.cautions.CAUTION`
        Standing caution shown at the top and at the end.

    Examples
    --------
    >>> doc = ReportDocument("Deck D2: reliability after campaign 3")
    >>> _ = doc.add_section("Members").add_paragraph("Two members were assessed.")
    >>> "Deck D2" in doc.to_html()
    True
    """

    def __init__(self, title: str, *, subtitle: str | None = None,
                 metadata: Mapping[str, Any] | None = None, caution: str = CAUTION) -> None:
        self.title = str(title)
        self.subtitle = None if subtitle is None else str(subtitle)
        self.metadata = dict(metadata or {})
        self.caution = str(caution)
        self.warnings: list[str] = []
        self.sections: list[Section] = []

    def add_section(self, heading: str) -> Section:
        """Add and return a new top-level section (numbered 1, 2, ...)."""
        section = Section(heading)
        self.sections.append(section)
        return section

    def add_warning(self, message: str) -> ReportDocument:
        """Add a document-level warning, listed in a box near the top."""
        self.warnings.append(str(message))
        return self

    def to_html(self, *, created: _dt.datetime | None = None,
                numbers_file: str | None = None) -> str:
        """Render the whole report as one self-contained HTML string.

        Parameters
        ----------
        created : datetime, optional
            Time stamp shown in the header (default: now, local time).
        numbers_file : str, optional
            File name of the companion JSON with all numbers, shown in the header.
        """
        created = created or _dt.datetime.now().astimezone()
        stamp = created.strftime("%Y-%m-%d %H:%M")
        meta = list(self.metadata.items())
        meta.append(("Created", stamp))
        meta.append(("Program version", f"assess {assess.__version__}"))
        if numbers_file:
            meta.append(("All numbers (JSON)", numbers_file))
        meta_html = _KeyValues(tuple((str(k), format_value(v)) for k, v in meta), None)

        counters, used_ids = _Counters(), set()
        rendered_sections, toc = [], []
        for i, section in enumerate(self.sections, start=1):
            body = section.render(counters, str(i), used_ids)
            anchor = re.match(r'<section id="([^"]+)"', body).group(1)
            toc.append(f"<li><a href=\"#{anchor}\">{_esc(section.heading)}</a></li>")
            rendered_sections.append(body)

        parts = [
            "<!DOCTYPE html>",
            "<html lang=\"en\"><head><meta charset=\"utf-8\">",
            "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">",
            f"<meta name=\"generator\" content=\"assess {_esc(assess.__version__)}\">",
            f"<title>{_esc(self.title)}</title><style>{_CSS}</style></head>",
            "<body><main class=\"page\">",
            f"<header><h1>{_esc(self.title)}</h1>",
        ]
        if self.subtitle:
            parts.append(f"<p class=\"subtitle\">{_esc(self.subtitle)}</p>")
        parts.append(meta_html.render(counters))
        parts.append("</header>")
        parts.append(_notice_html("Caution", [self.caution], "caution"))
        if self.warnings:
            parts.append(_notice_html("Points to check before using these results",
                                      self.warnings, "warning"))
        if len(self.sections) > 1:
            parts.append("<nav class=\"contents\"><p>Contents</p><ol>" + "".join(toc) + "</ol></nav>")
        parts.extend(rendered_sections)
        parts.append("<footer>")
        parts.append(_notice_html("Caution", [self.caution], "caution"))
        parts.append(f"<p class=\"colophon\">Produced with assess {_esc(assess.__version__)} "
                     f"on {_esc(stamp)}.</p>")
        parts.append("</footer></main></body></html>")
        return "\n".join(parts) + "\n"


__all__ = ["ReportDocument", "Section", "Tag", "TONES", "format_value", "MISSING_TEXT",
           "PNG_SIGNATURE"]
