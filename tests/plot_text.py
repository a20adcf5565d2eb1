"""Measure the text boxes of a matplotlib figure as drawn (shared by the plot tests)."""

from __future__ import annotations

import itertools

from matplotlib.text import Text


def _undrawn_tick_labels(fig) -> set:
    """Tick labels matplotlib keeps but does not draw (their tick is outside the view)."""
    hidden = set()
    for ax in fig.axes:
        for axis in (ax.xaxis, ax.yaxis):
            drawn = {id(label) for tick in axis._update_ticks()
                     for label in (tick.label1, tick.label2)}
            for tick in axis.get_major_ticks() + axis.get_minor_ticks():
                for label in (tick.label1, tick.label2):
                    if id(label) not in drawn:
                        hidden.add(id(label))
    return hidden


def text_boxes(fig) -> list:
    """(text, Bbox in display pixels) of every text a drawn figure really shows."""
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    hidden = _undrawn_tick_labels(fig)
    boxes = []
    for artist in fig.findobj(Text):
        if id(artist) in hidden or not artist.get_visible() or not artist.get_text().strip():
            continue
        box = artist.get_window_extent(renderer)
        if box.width > 0 and box.height > 0:
            boxes.append((artist.get_text(), box))
    return boxes


def overlapping_texts(fig, tolerance_px: float = 0.5) -> list[tuple[str, str]]:
    """Pairs of texts whose boxes overlap by more than ``tolerance_px`` each way."""
    pairs = []
    for (a, box_a), (b, box_b) in itertools.combinations(text_boxes(fig), 2):
        dx = min(box_a.x1, box_b.x1) - max(box_a.x0, box_b.x0)
        dy = min(box_a.y1, box_b.y1) - max(box_a.y0, box_b.y0)
        if dx > tolerance_px and dy > tolerance_px:
            pairs.append((a, b))
    return pairs


def outside_figure(fig) -> list[str]:
    """Texts that reach beyond the figure canvas (cut off in the PNG)."""
    width, height = fig.canvas.get_width_height()
    return [t for t, box in text_boxes(fig)
            if box.x0 < -0.5 or box.y0 < -0.5 or box.x1 > width + 0.5 or box.y1 > height + 0.5]
