"""HTML report builder and the two-file writer (HTML + JSON of all numbers)."""

from __future__ import annotations

import base64
import datetime as dt
import json
import math
import os
from html.parser import HTMLParser

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pandas as pd  # noqa: E402
import pytest  # noqa: E402
from scipy import stats  # noqa: E402

import assess  # noqa: E402
from assess.cautions import CAUTION  # noqa: E402
from assess.errors import InputError  # noqa: E402
from assess.reliability.result import ReliabilityResult  # noqa: E402
from assess.report import SCHEMA_VERSION, ReportDocument, to_json_native, write_report  # noqa: E402
from assess.report.document import MISSING_TEXT, PNG_SIGNATURE  # noqa: E402

NOW = dt.datetime(2026, 12, 2, 9, 15, tzinfo=dt.timezone.utc)


class _Page(HTMLParser):
    """Collects tables, images, visible text and tag names of a rendered report."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.tags, self.imgs, self.text = [], [], []
        self.tables, self._cell, self._row, self._in_style = [], None, None, False

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        attrs = dict(attrs)
        if tag == "style":
            self._in_style = True
        elif tag == "img":
            self.imgs.append(attrs)
        elif tag == "table":
            self.tables.append({"class": attrs.get("class"), "rows": []})
        elif tag == "tr":
            self._row = []
        elif tag in ("td", "th"):
            self._cell = []

    def handle_endtag(self, tag):
        if tag == "style":
            self._in_style = False
        elif tag in ("td", "th") and self._cell is not None:
            self._row.append("".join(self._cell).strip())
            self._cell = None
        elif tag == "tr" and self._row is not None:
            self.tables[-1]["rows"].append(self._row)
            self._row = None

    def handle_data(self, data):
        if self._in_style:
            return
        self.text.append(data)
        if self._cell is not None:
            self._cell.append(data)


def parse(html_text: str) -> _Page:
    page = _Page()
    page.feed(html_text)
    return page


def data_tables(page):
    return [t["rows"] for t in page.tables if t["class"] == "data"]


def test_text_is_escaped_and_never_becomes_markup():
    evil = '<script>alert("x")</script> & <b>bold</b>'
    doc = ReportDocument(evil, subtitle=evil, metadata={evil: evil})
    section = doc.add_section(evil)
    section.add_paragraph(evil).add_key_values({evil: evil}).add_notice(evil)
    section.add_table([{evil: evil}], caption=evil)
    doc.add_warning(evil)
    html_text = doc.to_html(created=NOW)
    page = parse(html_text)
    assert "script" not in page.tags and "b" not in page.tags
    assert "&lt;script&gt;" in html_text
    # The escaped text reads back as the original characters.
    assert sum(evil in chunk for chunk in page.text) >= 6


def test_caution_at_top_and_at_end():
    doc = ReportDocument("Deck D2")
    for name in ("Material properties", "Members", "Remaining life"):
        doc.add_section(name).add_paragraph(f"Text of {name}.")
    html_text = doc.to_html(created=NOW)
    first = html_text.find(CAUTION)
    last = html_text.rfind(CAUTION)
    assert first != -1 and last > first
    assert first < html_text.find("Material properties")
    assert last > html_text.find("Text of Remaining life.")
    assert html_text.count(CAUTION) == 2


def test_no_external_resources():
    doc = ReportDocument("Deck D2")
    fig, ax = plt.subplots()
    ax.plot([0, 1], [0, 1])
    doc.add_section("A").add_figure(fig, caption="Line").add_table([{"a": 1}])
    html_text = doc.to_html(created=NOW)
    lowered = html_text.lower()
    for needle in ("http://", "https://", "<link", "<script", "@import", "url("):
        assert needle not in lowered, needle
    assert html_text.startswith("<!DOCTYPE html>")


def test_table_from_list_of_dicts_formats_and_missing_values():
    rows = [
        {"member": "D2-S1", "beta [-]": 4.512, "pf [-]": float(stats.norm.sf(4.512))},
        {"member": "C4", "beta [-]": math.inf, "pf [-]": 0.0, "note": "no failure"},
        {"member": "B7", "beta [-]": np.float64(np.nan), "pf [-]": None},
    ]
    doc = ReportDocument("t")
    doc.add_section("S").add_table(rows, caption="Members", formats={"beta [-]": ".2f"})
    (table,) = data_tables(parse(doc.to_html(created=NOW)))
    header, body = table[0], table[1:]
    assert header == ["member", "beta [-]", "pf [-]", "note"]  # order of first appearance
    assert body[0] == ["D2-S1", "4.51", format(stats.norm.sf(4.512), ".4g"), MISSING_TEXT]
    assert body[1] == ["C4", "\u221e", "0", "no failure"]
    assert body[2] == ["B7", MISSING_TEXT, MISSING_TEXT, MISSING_TEXT]


def test_table_from_dataframe_with_and_without_index():
    frame = pd.DataFrame({"cover [mm]": [35.0, 42.5], "n [-]": [12, 8]},
                         index=pd.Index(["D2", "D3"], name="zone"))
    doc = ReportDocument("t")
    section = doc.add_section("S")
    section.add_table(frame)                        # named index: shown
    section.add_table(frame.reset_index(drop=True))  # plain range index: hidden
    first, second = data_tables(parse(doc.to_html(created=NOW)))
    assert first == [["zone", "cover [mm]", "n [-]"], ["D2", "35", "12"], ["D3", "42.5", "8"]]
    assert second == [["cover [mm]", "n [-]"], ["35", "12"], ["42.5", "8"]]


def test_tables_and_figures_are_numbered_in_order():
    doc = ReportDocument("t")
    a = doc.add_section("A")
    a.add_table([{"x": 1}], caption="first")
    fig = matplotlib.figure.Figure()
    fig.add_subplot().plot([1, 2])
    a.add_figure(fig, caption="a figure")
    a.add_subsection("A.sub").add_table([{"x": 2}], caption="second")
    html_text = doc.to_html(created=NOW)
    assert html_text.index("Table 1: first") < html_text.index("Table 2: second")
    assert "Figure 1: a figure" in html_text
    assert ">1.1</span> A.sub" in html_text


def test_bad_table_input_names_the_row():
    doc = ReportDocument("t")
    with pytest.raises(InputError, match=r"rows\[1\]"):
        doc.add_section("S").add_table([{"a": 1}, ["not", "a", "dict"]])


def test_figure_is_embedded_as_png_and_pyplot_figure_closed():
    fig, ax = plt.subplots()
    ax.plot([0, 1, 2], [1, 0, 1])
    number = fig.number
    doc = ReportDocument("t")
    doc.add_section("S").add_figure(fig, caption="V shape")
    assert number not in plt.get_fignums()
    (img,) = parse(doc.to_html(created=NOW)).imgs
    prefix = "data:image/png;base64,"
    assert img["src"].startswith(prefix)
    assert base64.b64decode(img["src"][len(prefix):]).startswith(PNG_SIGNATURE)
    assert img["alt"] == "V shape"


def test_json_native_conversion():
    result = ReliabilityResult(method="form", pf=float(stats.norm.sf(3.8)), beta=3.8,
                               cov=math.nan, n_calls=12,
                               design_point_u=np.array([1.0, -3.6]))
    numbers = {
        "beta": np.float32(3.5), "n": np.int64(7), "ok": np.bool_(True),
        "pf": np.array([1e-5, np.nan, np.inf]), "pair": (1, -np.inf),
        "when": dt.date(2026, 11, 2), "by_member": {np.int64(3): 1.0},
        "table": pd.DataFrame({"a": [1.0, np.nan]}), "form": result,
    }
    out = to_json_native(numbers)
    text = json.dumps(out, allow_nan=False)  # raises if any NaN/inf slipped through
    back = json.loads(text)
    assert back["beta"] == pytest.approx(3.5) and back["n"] == 7 and back["ok"] is True
    assert back["pf"] == [1e-5, None, None]
    assert back["pair"] == [1, None]
    assert back["when"] == "2026-11-02"
    assert back["by_member"] == {"3": 1.0}
    assert back["table"] == [{"a": 1.0}, {"a": None}]
    assert back["form"]["beta"] == 3.8 and back["form"]["cov"] is None
    assert back["form"]["design_point_u"] == [1.0, -3.6]


def test_json_conversion_error_names_key_path():
    with pytest.raises(InputError, match=r"numbers\.members\[1\]\.beta"):
        to_json_native({"members": [{"beta": 1.0}, {"beta": 1 + 2j}]})


def _sample_document():
    doc = ReportDocument("Deck D2", metadata={"Site": "Demo car park"})
    doc.add_warning("Only six cover readings in bay C4.")
    doc.add_section("Members").add_table([{"member": "D2", "beta [-]": 4.1}])
    return doc


def test_write_report_pair_in_folder(tmp_path):
    html_path, json_path = write_report(tmp_path, tmp_path, _sample_document(),
                                        {"beta": np.float64(4.1), "pf": np.nan}, now=NOW)
    assert html_path.name == "report-2026-12-02T0915-001.html"
    assert json_path.name == "report-2026-12-02T0915-001.json"
    payload = json.loads(json_path.read_text(encoding="utf-8"),
                         parse_constant=lambda c: pytest.fail(f"non-JSON constant {c}"))
    assert payload["schema_version"] == SCHEMA_VERSION
    assert payload["code_version"] == assess.__version__
    assert payload["numbers"] == {"beta": 4.1, "pf": None}
    assert payload["report_html"] == html_path.name
    assert payload["warnings"] == ["Only six cover readings in bay C4."]
    html_text = html_path.read_text(encoding="utf-8")
    assert json_path.name in html_text and CAUTION in html_text
    # Only the two reports are left: no temporary files.
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted([html_path.name, json_path.name])
    # Ordinary permissions (the umask), not a private temp-file mode.
    umask = os.umask(0)
    os.umask(umask)
    assert html_path.stat().st_mode & 0o777 == 0o666 & ~umask


def test_reports_are_appended_never_overwritten(tmp_path):
    first = write_report(tmp_path, tmp_path, _sample_document(), {"run": 1}, now=NOW)
    before = [p.read_bytes() for p in first]
    second = write_report(tmp_path, tmp_path, _sample_document(), {"run": 2}, now=NOW)
    assert second[0].name == "report-2026-12-02T0915-002.html"
    assert [p.read_bytes() for p in first] == before
    assert json.loads(second[1].read_text())["numbers"] == {"run": 2}
    with pytest.raises(InputError, match="never overwritten"):
        write_report(first[0], tmp_path / "other.json", _sample_document(), {}, now=NOW)
    assert [p.read_bytes() for p in first] == before
    assert not (tmp_path / "other.json").exists()


def test_json_and_html_in_different_folders_share_a_free_stem(tmp_path):
    html_dir, json_dir = tmp_path / "html", tmp_path / "json"
    html_dir.mkdir()
    json_dir.mkdir()
    (json_dir / "report-2026-12-02T0915-001.json").write_text("{}")
    html_path, json_path = write_report(html_dir, json_dir, _sample_document(), {}, now=NOW)
    assert html_path.stem == json_path.stem == "report-2026-12-02T0915-002"


def test_unserialisable_numbers_write_nothing(tmp_path):
    with pytest.raises(InputError, match=r"numbers\.bad"):
        write_report(tmp_path, tmp_path, _sample_document(), {"bad": object()}, now=NOW)
    assert list(tmp_path.iterdir()) == []
