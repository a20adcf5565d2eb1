"""Figures of the report kept under a hash of what draws them (assess/report/figure_cache.py).

References: the PNG file signature and IHDR layout (PNG specification, W3C
Recommendation 2003, sections 5.2-5.3 and 11.2.2, from memory); the rest are
self-consistency checks of the store (same drawing -> same bytes, not drawn again;
any changed input -> drawn again).
"""

import numpy as np
import pytest

from assess.report.figure_cache import (
    FIGURE_FOLDER,
    Drawing,
    drawing_hash,
    png_of,
    png_width,
    render_png,
)
from assess.report.plots import plot_beta_over_time

CALLS = {"n": 0}


def counted_plot(*args, **kwargs):
    CALLS["n"] += 1
    return plot_beta_over_time(*args, **kwargs)


def drawing(target=3.1, curve_end=2.5):
    t = np.linspace(0.0, 50.0, 11)
    return Drawing(counted_plot, (t, {"S1": np.linspace(4.0, curve_end, 11)}, target),
                   dict(period="1-year"))


def test_png_width_reads_the_header_of_a_drawn_figure():
    # 7.5 in at 40 dpi: 300 px wide (PNG spec: width is bytes 16-20 of the IHDR chunk)
    png = render_png(drawing().figure(), dpi=40)
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    assert png_width(png) == 300
    with pytest.raises(ValueError):
        png_width(b"GIF89a" + bytes(30))


def test_hash_changes_with_every_input_and_not_otherwise():
    base = drawing_hash(drawing(), 40)
    assert drawing_hash(drawing(), 40) == base
    assert drawing_hash(drawing(target=3.2), 40) != base
    assert drawing_hash(drawing(curve_end=2.4999999), 40) != base
    assert drawing_hash(drawing(), 41) != base
    renamed = drawing()
    renamed.kwargs["period"] = "50-year"
    assert drawing_hash(renamed, 40) != base


def test_a_stored_figure_is_read_not_drawn_again(tmp_path):
    CALLS["n"] = 0
    first = png_of(drawing(), dpi=40, site_folder=tmp_path)
    second = png_of(drawing(), dpi=40, site_folder=tmp_path)
    assert CALLS["n"] == 1
    assert first == second
    assert len(list((tmp_path / FIGURE_FOLDER).glob("*.png"))) == 1
    png_of(drawing(target=2.9), dpi=40, site_folder=tmp_path)
    assert CALLS["n"] == 2
    assert len(list((tmp_path / FIGURE_FOLDER).glob("*.png"))) == 2


def test_a_damaged_stored_figure_is_set_aside_and_drawn_again(tmp_path):
    CALLS["n"] = 0
    png = png_of(drawing(), dpi=40, site_folder=tmp_path)
    (stored,) = (tmp_path / FIGURE_FOLDER).glob("*.png")
    stored.write_bytes(b"half a file")
    with pytest.warns(UserWarning, match="set aside"):
        again = png_of(drawing(), dpi=40, site_folder=tmp_path)
    assert CALLS["n"] == 2
    assert again == png
    assert len(list((tmp_path / FIGURE_FOLDER).glob("*.damaged-*"))) == 1


def test_without_a_site_folder_nothing_is_stored(tmp_path):
    CALLS["n"] = 0
    png_of(drawing(), dpi=40)
    png_of(drawing(), dpi=40)
    assert CALLS["n"] == 2
