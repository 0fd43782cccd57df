"""Rows of markers under the chart, one column per cycle day: flow, mucus, LH, hCG and scans."""

from __future__ import annotations

from rich.text import Text
from textual.widgets import DataTable

from caseload.tui.cycle_view import STRIP_ROWS, CycleView

DAY_WIDTH = 2
LABEL_WIDTH = 6
LEGEND = (
    "flow ▁ spotting ▃ light ▅ moderate ▇ heavy · mucus 0 dry … 5 stretchy · LH/hCG + or - "
    "(a number: the level) · scan: lead follicle mm"
)


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
            mark_today = view.today_day == day
            label = Text(f"{day:>2}"[-DAY_WIDTH:], style="bold reverse" if mark_today else "dim")
            self.add_column(label, width=DAY_WIDTH, key=str(day))
        for row in STRIP_ROWS:
            marks = view.strip.get(row, {})
            cells = [Text(row, style="bold")]
            cells += [Text(marks.get(day, " ")[:DAY_WIDTH]) for day in range(1, view.last_day + 1)]
            self.add_row(*cells, key=row)
