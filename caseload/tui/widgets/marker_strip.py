"""Rows of markers under the chart, one column per cycle day: flow, mucus, LH, hCG and scans."""

from __future__ import annotations

from rich.text import Text
from textual.widgets import DataTable

from caseload.tui.cycle_view import STRIP_ROWS, CycleView

DAY_WIDTH = 2
LABEL_WIDTH = 6
LEGEND = "flow ▁▃▅▇ spotting to heavy · mucus 0 dry to 5 stretchy · LH, hCG + - or level · scan: lead mm"


def _labelled(day: int, today: int | None) -> bool:
    """Odd days and today: two-digit numbers in adjacent columns would run together."""
    if today is not None and abs(day - today) <= 1:
        return day == today
    return day % 2 == 1


class MarkerStrip(DataTable):
    """Not focusable by Tab: it is read, not worked in."""

    can_focus = False

    def __init__(self, **kwargs):
        super().__init__(cursor_type="none", cell_padding=0, show_cursor=False, **kwargs)

    def show(self, view: CycleView | None) -> None:
        self.clear(columns=True)
        if view is None:
            return
        self.add_column(Text("day", style="dim"), width=LABEL_WIDTH, key="label")
        for day in range(1, view.last_day + 1):
            shown = f"{day:<2}" if _labelled(day, view.today_day) else ""
            label = Text(shown, style="bold reverse" if view.today_day == day else "dim")
            self.add_column(label, width=DAY_WIDTH, key=str(day))
        for row in STRIP_ROWS:
            marks = view.strip.get(row, {})
            cells = [Text(row, style="bold")]
            cells += [Text(marks.get(day, " ")[:DAY_WIDTH]) for day in range(1, view.last_day + 1)]
            self.add_row(*cells, key=row)
