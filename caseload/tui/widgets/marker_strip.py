"""Rows of markers under the chart, one column per cycle day: flow, mucus, LH, hCG and scans.

The day columns are sized to sit under the chart's own days: the chart spreads the cycle over
its width less the two scales, so the strip does the same.
"""

from __future__ import annotations

from rich.text import Text
from textual.widgets import DataTable

from caseload.presentation.glossary import MUCUS_LEGEND
from caseload.tui.cycle_view import STRIP_ROWS, CycleView

LEFT_SCALE = 6  # the chart's temperature labels and frame: "36.60┤"
RIGHT_SCALE = 5  # the chart's probability labels: "├1.00"
MIN_DAY_WIDTH = 2
LEGEND = f"{MUCUS_LEGEND} · flow ▁▃▅▇ spotting to heavy · LH, hCG + - or level · scan: lead mm"


def day_widths(total: int, days: int) -> list[int]:
    """Integer column widths for `days` days spread over what the chart's canvas takes of `total`."""
    canvas = max(total - LEFT_SCALE - RIGHT_SCALE, days * MIN_DAY_WIDTH)
    edges = [round(canvas * d / days) for d in range(days + 1)]
    return [b - a for a, b in zip(edges, edges[1:])]


def day_labels(widths: list[int], today: int | None) -> list[str]:
    """The day numbers over the columns, left-aligned; a number that fills its column leaves the
    next one blank, so that numbers never run together. Today is always numbered."""
    labels: list[str] = []
    for day, width in enumerate(widths, start=1):
        text = str(day)
        after_full = day > 1 and len(labels[-1]) >= widths[day - 2]
        fills = len(text) >= width
        makes_room_for_today = today is not None and day == today - 1 and fills
        wanted = day == today or not (after_full or makes_room_for_today)
        labels.append(text if wanted else "")
    return labels


class MarkerStrip(DataTable):
    """Not focusable: it is read, not worked in."""

    can_focus = False

    def __init__(self, **kwargs):
        super().__init__(cursor_type="none", cell_padding=0, show_cursor=False, **kwargs)
        self._view: CycleView | None = None
        self._drawn_width = 0

    def show(self, view: CycleView | None) -> None:
        self._view = view
        self._draw()

    def on_resize(self) -> None:
        if self.size.width != self._drawn_width:
            self._draw()

    def _draw(self) -> None:
        self._drawn_width = self.size.width
        self.clear(columns=True)
        view = self._view
        if view is None:
            return
        widths = day_widths(self.size.width or 80, view.last_day)
        self.add_column(Text("day", style="dim"), width=LEFT_SCALE, key="label")
        for day, (width, shown) in enumerate(zip(widths, day_labels(widths, view.today_day)), start=1):
            style = "bold reverse" if view.today_day == day else "dim"
            self.add_column(Text(shown, style=style), width=width, key=str(day))
        for row in STRIP_ROWS:
            marks = view.strip.get(row, {})
            cells = [Text(row, style="bold")]
            cells += [Text(marks.get(day, "")) for day in range(1, view.last_day + 1)]
            self.add_row(*cells, key=row)
