"""The written report opens in a real browser: it renders, shows its figures and the caution.

Headless Chromium (Debian package ``chromium``; CI installs it) takes a
screenshot and dumps the DOM of the report file. Skipped only when no Chromium
binary is on PATH.
"""

from __future__ import annotations

import base64
import re
import shutil
import subprocess
from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.image  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402
from scipy import stats  # noqa: E402

from assess.cautions import CAUTION  # noqa: E402
from assess.report import (  # noqa: E402
    ReportDocument,
    plots,  # noqa: E402
    write_report,
)
from assess.report.document import PNG_SIGNATURE  # noqa: E402

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
WIDTH, HEIGHT = 1280, 2000
TARGET = 4.2  # JCSS PMC annual target for normal cost of safety, CC2 (from memory)

pytestmark = pytest.mark.skipif(
    CHROMIUM is None,
    reason="no chromium binary on PATH (install Debian's 'chromium' package to run this test)")


def _chromium(url: str, profile: Path, *extra: str) -> subprocess.CompletedProcess:
    command = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
               "--no-first-run", "--disable-background-networking", "--disable-component-update",
               "--disable-sync", f"--user-data-dir={profile}", *extra, url]
    return subprocess.run(command, capture_output=True, text=True, timeout=120, check=False)


@pytest.fixture(scope="module")
def written_report(tmp_path_factory):
    folder = tmp_path_factory.mktemp("report")
    rng = np.random.default_rng(3)
    doc = ReportDocument("Demo car park, deck level 2: reliability after campaign 3",
                         subtitle="Invented demo data", metadata={"Site": "Demo car park"})
    doc.add_warning("Only six cover readings in bay C4.")
    members = doc.add_section("Reliability per member and failure mode")
    members.add_figure(plots.plot_beta_before_after(
        ["D2-S1", "D2-S1", "C4"], [3.9, 2.9, 4.4], [4.5, 3.2, 4.8], TARGET,
        modes=["flexure", "punching", "shear"]), caption="Reliability index before and after updating")
    members.add_table([{"member": "D2-S1", "failure mode": "flexure", "beta [-]": 4.5,
                        "pf [-]": stats.norm.sf(4.5)},
                       {"member": "C4", "failure mode": "shear", "beta [-]": 4.8,
                        "pf [-]": stats.norm.sf(4.8)}], caption="Reliability after updating")
    material = doc.add_section("Updated material properties")
    material.add_figure(plots.plot_prior_posterior(
        stats.norm(30, 5), rng.normal(34, 1.8, 2000), quantity="In-situ compressive strength",
        unit="MPa"), caption="Prior and posterior of the in-situ strength")
    t = np.linspace(0, 50, 26)
    life = doc.add_section("Remaining life")
    life.add_figure(plots.plot_beta_over_time(t, {"D2-S1": 4.6 - 0.04 * t}, TARGET),
                    caption="Reliability index over time")
    html_path, json_path = write_report(folder, folder, doc, {"beta": {"D2-S1": 4.5}})
    return html_path, 3


def test_every_image_is_an_embedded_png(written_report):
    html_path, n_figures = written_report
    sources = re.findall(r'<img\b[^>]*\bsrc="([^"]*)"', html_path.read_text(encoding="utf-8"))
    assert len(sources) == n_figures
    for src in sources:
        assert src.startswith("data:image/png;base64,")
        png = base64.b64decode(src.split(",", 1)[1], validate=True)
        assert png.startswith(PNG_SIGNATURE)


def test_screenshot_shows_a_rendered_report(written_report, tmp_path):
    html_path, _ = written_report
    shot = tmp_path / "report.png"
    run = _chromium(html_path.resolve().as_uri(), tmp_path / "profile",
                    f"--screenshot={shot}", f"--window-size={WIDTH},{HEIGHT}")
    assert shot.exists(), run.stderr[-2000:]
    pixels = matplotlib.image.imread(shot)[..., :3]  # floats in [0, 1]
    assert pixels.shape[:2] == (HEIGHT, WIDTH)
    # Not blank: text, rules and plot lines give a few percent of dark pixels.
    luminance = pixels @ np.array([0.2126, 0.7152, 0.0722])
    assert 0.005 < np.mean(luminance < 0.6) < 0.5
    # The caution box (background #fff8e6) is drawn in the top third of the first screen.
    caution_bg = np.all(np.abs(pixels - np.array([255, 248, 230]) / 255) < 0.02, axis=-1)
    rows = np.flatnonzero(caution_bg.any(axis=1))
    assert rows.size > 20 and rows[0] < HEIGHT / 3
    # The first figure really displays: its dashed target line has the plots' target colour.
    target_rgb = np.array(matplotlib.colors.to_rgb(plots.TARGET_COLOUR))
    assert np.sum(np.all(np.abs(pixels - target_rgb) < 0.08, axis=-1)) > 300


def test_dom_carries_caution_and_figures(written_report, tmp_path):
    html_path, n_figures = written_report
    run = _chromium(html_path.resolve().as_uri(), tmp_path / "profile", "--dump-dom")
    dom = run.stdout
    assert "</html>" in dom, run.stderr[-2000:]
    assert dom.count(CAUTION) == 2
    assert len(re.findall(r"<img\b", dom)) == n_figures
    assert "Figure 3: Reliability index over time" in dom


# -- the first page and member plots: no text box overlaps another, measured in the browser
_MEASURE = """
<script>
(function () {
  var boxes = [];
  var walker = document.createTreeWalker(document.querySelector("main"), NodeFilter.SHOW_TEXT);
  var node, id = 0;
  while ((node = walker.nextNode())) {
    if (!node.textContent.trim()) continue;
    var range = document.createRange();
    range.selectNodeContents(node);
    var rects = range.getClientRects();
    for (var i = 0; i < rects.length; i++) {
      var r = rects[i];
      if (r.width > 0 && r.height > 0) boxes.push({id: id, t: node.textContent.trim().slice(0, 40),
                                                    x0: r.left, y0: r.top, x1: r.right, y1: r.bottom});
    }
    id++;
  }
  var overlaps = [];
  for (var a = 0; a < boxes.length; a++) {
    for (var b = a + 1; b < boxes.length; b++) {
      var p = boxes[a], q = boxes[b];
      if (p.id === q.id) continue;
      var dx = Math.min(p.x1, q.x1) - Math.max(p.x0, q.x0);
      var dy = Math.min(p.y1, q.y1) - Math.max(p.y0, q.y0);
      if (dx > 1 && dy > 1) overlaps.push(p.t + " | " + q.t);
    }
  }
  var out = document.createElement("pre");
  out.id = "measured";
  out.textContent = JSON.stringify({boxes: boxes.length, overlaps: overlaps});
  document.body.appendChild(out);
})();
</script>
"""


def test_first_page_table_and_member_plots_have_no_overlapping_text(tmp_path):
    import json

    from assess.report.document import Tag
    from tests.plot_text import outside_figure, overlapping_texts

    members = [f"M{k:02d}" for k in range(18)]
    verdicts = ["meets target", "below target", "undecided"]
    rows = [{"Member": m, "Verdict": Tag(verdicts[k % 3], ("good", "bad", "unsure")[k % 3]),
             "Beta after tests, 1-year [-]": f"{3.5 + 0.1 * k:.2f}",
             "Range of beta after [-]": f"{3.4 + 0.1 * k:.2f} to {3.6 + 0.1 * k:.2f}",
             "Remaining life (annual beta against annual target)": "more than 50 yr",
             "Recommended action": "Meets the target; keep as is and re-inspect at the usual "
                                   "interval.",
             "Further testing": "not analysed (done for member M01)"}
            for k, m in enumerate(members)]
    doc = ReportDocument("Invented site: first page")
    sec = doc.add_section("Findings at a glance")
    sec.add_table(rows, caption="Every member", marked=[k % 3 == 1 for k in range(18)])
    before = np.linspace(3.0, 9.5, 18)
    figures = [plots.plot_beta_before_after(members, before, before + 0.2, TARGET,
                                            modes=["flexure"] * 18),
               plots.plot_beta_over_time(np.arange(51.0), {m: 5.5 - 0.01 * (k + 1) *
                                                           np.arange(51.0)
                                                           for k, m in enumerate(members)},
                                         TARGET, period="1-year"),
               plots.plot_beta_history(["2018-04-01", "2022-05-10", "2026-11-02"],
                                       {m: [4.8 - 0.05 * k, 4.6, 4.4] for k, m in
                                        enumerate(members)}, TARGET, period="1-year")]
    for fig in figures:  # text boxes inside the figures, measured as drawn
        assert overlapping_texts(fig) == [] and outside_figure(fig) == []
        sec.add_figure(fig, caption="Member plot")
    html_path, _ = write_report(tmp_path, tmp_path, doc, {})
    probe = tmp_path / "probe.html"
    probe.write_text(html_path.read_text(encoding="utf-8").replace("</body>", _MEASURE + "</body>"),
                     encoding="utf-8")
    run = _chromium(probe.resolve().as_uri(), tmp_path / "profile", "--dump-dom",
                    f"--window-size={WIDTH},{HEIGHT}")
    match = re.search(r'<pre id="measured">(.*?)</pre>', run.stdout, re.S)
    assert match, run.stderr[-2000:]
    measured = json.loads(match.group(1).replace("&quot;", '"').replace("&amp;", "&"))
    assert measured["boxes"] > 100           # every cell's text was measured
    assert measured["overlaps"] == []
