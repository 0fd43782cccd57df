"""The chart of one cycle: the temperature plot, the marker rows under it and their legend, drawn
on one `DayColumns` so that a day's reading and its marks share a column at every width.

Drawn here rather than by a plotting library: a library places points by its own rounding on a
canvas whose width depends on its axis labels, and no public call gives the column of a point, so
the rows under it could only guess (they drifted by up to five columns). Each plot row is one step
of a round temperature scale; a reading the shift rules count is a dot joined to the next by a
line of braille dots, a reading they leave out (disturbed, fever) a cross on its own, and a left-out
reading beyond the scale an arrow at its edge. The coverline is a dotted level line, the day the
rise was confirmed an upright line; today is marked in the day numbers. A cycle too long for the
width shows a window of days, moved with the arrow keys or the mouse wheel.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from rich.style import Style
from rich.text import Text
from textual import events
from textual.binding import Binding
from textual.widget import Widget

from caseload.tui.cycle_view import CycleView
from caseload.tui.day_columns import LABEL_WIDTH, DayColumns, day_columns
from caseload.tui.widgets.marker_strip import legend_items, marker_lines

DEFAULT_RANGE = (36.0, 37.2)
STEPS_C = (0.05, 0.1, 0.2, 0.5, 1.0)  # the scale's step per row: the finest that shows every counted reading
MIN_PLOT_ROWS = 6
COUNTED, LEFT_OUT, ABOVE, BELOW = "●", "×", "↑", "↓"
COVERLINE, CONFIRMED = "┄", "│"
# Braille dots by (column, row) inside a cell: U+2800 plus these bits.
BRAILLE_BITS = ((0x01, 0x02, 0x04, 0x40), (0x08, 0x10, 0x20, 0x80))
DAYS = Binding.Group("Days")
LEGEND_PLOT = f"{COUNTED} reading · {LEFT_OUT} left out of the shift (flagged or fever), {ABOVE}{BELOW} off the scale"


@dataclass(frozen=True)
class Scale:
    """The temperature of each plot row: `top` on row 0, `step` less on each row below."""

    top: float
    step: float
    rows: int

    def row(self, celsius: float) -> int:
        """The row nearest `celsius`, which may lie outside 0..rows-1."""
        return round((self.top - celsius) / self.step)

    def value(self, row: int) -> float:
        return self.top - row * self.step


def scale(view: CycleView, rows: int) -> Scale:
    """The scale that shows the counted readings and the coverline in `rows` rows, on round steps,
    the readings centred. Left-out readings do not stretch it: a fever would flatten the shift."""
    rows = max(2, rows)
    values = [t for _, t in view.temps] + ([view.coverline] if view.coverline is not None else [])
    if not values:
        values = [t for _, t, _ in view.left_out] or list(DEFAULT_RANGE)
    lo, hi = min(values), max(values)

    def units(step: float) -> tuple[int, int]:
        # Whole steps below the lowest and above the highest value (round() absorbs float noise).
        return math.floor(round(lo / step, 6)), math.ceil(round(hi / step, 6))

    step = next((s for s in STEPS_C if units(s)[1] - units(s)[0] <= rows - 1), STEPS_C[-1])
    low, high = units(step)
    spare = max(0, (rows - 1) - (high - low))
    return Scale(round((high + spare // 2) * step, 2), step, rows)


class _Canvas:
    """The plot area: one glyph and style per cell, and braille dots where no glyph is."""

    def __init__(self, width: int, rows: int) -> None:
        self.width, self.rows = width, rows
        self.glyphs: dict[tuple[int, int], tuple[str, str]] = {}
        self.dots: dict[tuple[int, int], int] = {}

    def put(self, row: int, column: int, glyph: str, style: str) -> None:
        if 0 <= row < self.rows and 0 <= column < self.width:
            self.glyphs[row, column] = (glyph, style)

    def fill(self, row: int, column: int, glyph: str, style: str) -> None:
        """Like `put`, on a cell nothing else has taken."""
        if (row, column) not in self.glyphs and (row, column) not in self.dots:
            self.put(row, column, glyph, style)

    def line(self, start: tuple[int, int], end: tuple[int, int]) -> None:
        """Braille dots from one cell's centre to another's (row, column), skipping cells with glyphs."""
        (r0, c0), (r1, c1) = start, end
        x0, y0, x1, y1 = 2 * c0 + 1, 4 * r0 + 2, 2 * c1, 4 * r1 + 2
        steps = max(abs(x1 - x0), abs(y1 - y0), 1)
        for i in range(steps + 1):
            x = x0 + round((x1 - x0) * i / steps)
            y = y0 + round((y1 - y0) * i / steps)
            cell = (y // 4, x // 2)
            if cell not in self.glyphs and 0 <= cell[0] < self.rows and 0 <= cell[1] < self.width:
                self.dots[cell] = self.dots.get(cell, 0) | BRAILLE_BITS[x % 2][y % 4]

    def text(self, row: int, style: str) -> Text:
        line = Text(no_wrap=True, end="")
        for column in range(self.width):
            if (row, column) in self.glyphs:
                glyph, glyph_style = self.glyphs[row, column]
                line.append(glyph, glyph_style)
            elif (row, column) in self.dots:
                line.append(chr(0x2800 + self.dots[row, column]), style)
            else:
                line.append(" ")
        return line


@dataclass(frozen=True)
class Palette:
    """The chart's styles, from the theme: counted readings and their line, left-out readings, rules."""

    reading: str = "bold"
    left_out: str = "bold"
    rule: str = ""


def plot_lines(view: CycleView, columns: DayColumns, rows: int, palette: Palette = Palette()) -> list[Text]:
    """The temperature plot of `view` on `columns`, `rows` high, with its scale on the left."""
    s = scale(view, rows)
    canvas = _Canvas(columns.shown * columns.width, s.rows)

    def point(day: int, celsius: float, glyph: str, style: str) -> None:
        """A reading in its day's column; one beyond the scale as an arrow at the scale's edge."""
        if columns.column(day) is None:
            return
        row = s.row(celsius)
        glyph = ABOVE if row < 0 else BELOW if row >= s.rows else glyph
        canvas.put(min(max(row, 0), s.rows - 1), columns.x(day) - LABEL_WIDTH, glyph, style)

    for day, celsius, _why in view.left_out:
        point(day, celsius, LEFT_OUT, palette.left_out)
    for day, celsius in view.temps:
        point(day, celsius, COUNTED, palette.reading)
    # A line runs into the window from a reading outside it, so the edge of the window is not a gap.
    placed = [(s.row(t), columns.x(d) - LABEL_WIDTH) for d, t in view.temps]
    for start, end in zip(placed, placed[1:]):
        if max(start[1], end[1]) >= 0 and min(start[1], end[1]) < canvas.width:
            canvas.line(start, end)
    if view.confirmed_day is not None and (column := columns.column(view.confirmed_day)) is not None:
        for row in range(s.rows):
            canvas.fill(row, column - LABEL_WIDTH, CONFIRMED, palette.rule)
    if view.coverline is not None:
        for column in range(canvas.width):
            canvas.fill(s.row(view.coverline), column, COVERLINE, palette.rule)
    lines = []
    for row in range(s.rows):
        value = s.value(row)
        labelled = round(value * 100) % 10 == 0 or s.step >= 0.1
        label = Text(f"{value:.2f}".rjust(LABEL_WIDTH - 1) if labelled else " " * (LABEL_WIDTH - 1), style="dim", end="")
        label.append("┤" if labelled else "│", style="dim")
        lines.append(label + canvas.text(row, palette.reading))
    return lines


def rule_items(view: CycleView) -> list[str]:
    """The coverline and the confirmation day in words and numbers, as the legend shows them."""
    items = []
    if view.coverline is not None:
        items.append(f"{COVERLINE} coverline {view.coverline:.2f} C")
    if view.confirmed_day is not None:
        items.append(f"{CONFIRMED} rise confirmed on day {view.confirmed_day}")
    return items


def legend_lines(view: CycleView, columns: DayColumns, width: int) -> list[Text]:
    """The legend of what is drawn, wrapped to `width`; first where the window is in a long cycle."""
    items = [LEGEND_PLOT] + rule_items(view) + legend_items(view)
    if columns.earlier_hidden or columns.later_hidden:
        items.insert(0, f"days {columns.first}-{columns.last} of {columns.days}, ← → to move")
    lines: list[str] = []
    for item in items:
        if lines and len(lines[-1]) + 3 + len(item) < width:
            lines[-1] += " · " + item
        else:
            lines.append(item)
    return [Text(line, style="dim", no_wrap=True, end="") for line in lines]


class CycleChart(Widget, can_focus=True):
    """Set the cycle with `show(view)`; the chart is drawn for whatever size the widget is given."""

    BINDINGS = [
        Binding("left", "move(-1)", "Earlier days", group=DAYS, id="chart.earlier"),
        Binding("right", "move(1)", "Later days", group=DAYS, id="chart.later"),
    ]

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self._view: CycleView | None = None
        self._first: int | None = None  # the window's first day once moved; None: the default window

    def show(self, view: CycleView | None) -> None:
        same_cycle = view is not None and self._view is not None and (view.start, view.index) == (
            self._view.start, self._view.index)
        if not same_cycle:
            self._first = None
        self._view = view
        self.refresh()
        self.refresh_bindings()

    def on_mount(self) -> None:
        self.app.theme_changed_signal.subscribe(self, lambda _theme: self.refresh())

    def on_resize(self) -> None:
        self.refresh_bindings()

    def columns(self) -> DayColumns | None:
        """The day columns at the widget's width, the window where it was left (or around today)."""
        view = self._view
        if view is None:
            return None
        columns = day_columns(self.size.width, view.last_day)
        if self._first is not None:
            return columns.starting(self._first)
        return columns.around(view.today_day) if view.today_day else columns

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action == "move":
            columns = self.columns()
            return columns is not None and (columns.earlier_hidden or columns.later_hidden)
        return True

    def action_move(self, step: int) -> None:
        columns = self.columns()
        if columns is not None:
            self._first = columns.starting(columns.first + step * max(1, columns.shown // 2)).first
            self.refresh()

    def on_mouse_scroll_down(self, event: events.MouseScrollDown) -> None:
        self.action_move(1)

    def on_mouse_scroll_up(self, event: events.MouseScrollUp) -> None:
        self.action_move(-1)

    def _palette(self) -> Palette:
        colours = self.app.theme_variables
        return Palette(
            reading=f"bold {colours['primary']}",
            left_out=f"bold {colours['error']}",
            rule=colours["warning"],
        )

    def lines(self) -> list[Text]:
        """Every line of the chart at the widget's size."""
        view, columns = self._view, self.columns()
        if view is None or columns is None:
            return [Text("No cycle yet: log a bleed to start one")]
        width, height = self.size.width, self.size.height
        strip = marker_lines(view, columns)
        legend = legend_lines(view, columns, width)
        rows = height - len(strip) - len(legend)
        if rows < MIN_PLOT_ROWS:
            legend = legend[: max(0, height - len(strip) - MIN_PLOT_ROWS)]
            rows = max(MIN_PLOT_ROWS, height - len(strip) - len(legend))
        return plot_lines(view, columns, rows, self._palette()) + strip + legend

    def render(self) -> Text:
        return Text("\n", no_wrap=True, overflow="crop").join(self.lines())
