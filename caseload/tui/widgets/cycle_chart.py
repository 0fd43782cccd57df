"""The temperature chart of one cycle, with the coverline, the confirmation day and P(fertile) bars.

Temperatures use the left scale (C); the chance of a fertile day uses the right scale (0-100%), drawn
as bars under the readings from today on. The only upright line is the day the rise was confirmed
(today is marked in the strip below). The colours come from the current theme.
"""

from __future__ import annotations

from textual.color import Color
from textual_plotext import PlotextPlot

from caseload.tui.cycle_view import CycleView

DEFAULT_RANGE = (36.0, 37.2)


def _rgb(variable: str, theme_variables: dict[str, str]) -> tuple[int, int, int]:
    return Color.parse(theme_variables[variable]).rgb


def tick_days(last_day: int) -> list[int]:
    step = 1 if last_day <= 14 else 2 if last_day <= 30 else 5
    return [1] + list(range(step if step > 1 else 2, last_day + 1, step))


class CycleChart(PlotextPlot):
    """Set `view` with `show(view)`; the plot redraws itself at whatever size it is given."""

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self._view: CycleView | None = None

    def show(self, view: CycleView | None) -> None:
        self._view = view
        self._draw()

    def on_mount(self) -> None:
        super().on_mount()
        self.app.theme_changed_signal.subscribe(self, lambda _theme: self._draw())

    def _draw(self) -> None:
        plt = self.plt
        plt.clear_figure()
        view = self._view
        if view is None:
            plt.title("No cycle yet: log a bleed to start one")
            self.refresh()
            return
        colours = self.app.theme_variables
        line, rule, bars, mark = (_rgb(v, colours) for v in ("primary", "warning", "secondary", "error"))
        if view.fertile:
            days, chances = zip(*view.fertile)
            plt.bar(list(days), list(chances), yside="right", color=bars, width=0.6)
        plt.ylim(0, 1, yside="right")
        readings = sorted(view.temps)
        if readings:
            plt.plot([d for d, _ in readings], [t for _, t in readings], yside="left", color=line, marker="hd")
        else:
            # A blank point off the chart keeps the temperature scale, so the days line up with the strip.
            plt.scatter([0], [DEFAULT_RANGE[0]], yside="left", marker=" ")
        if view.disturbed:
            plt.scatter([d for d, _ in view.disturbed], [t for _, t in view.disturbed], yside="left", color=mark, marker="x")
        if view.coverline is not None:
            plt.horizontal_line(view.coverline, color=rule, yside="left")
        if view.confirmed_day is not None:
            plt.vertical_line(view.confirmed_day, color=rule)
        every = [t for _, t in view.temps + view.disturbed] + ([view.coverline] if view.coverline else [])
        lo, hi = (min(every) - 0.15, max(every) + 0.15) if every else DEFAULT_RANGE
        plt.ylim(lo, hi, yside="left")
        plt.xlim(0.5, view.last_day + 0.5)
        plt.xticks(tick_days(view.last_day))
        plt.yfrequency(4, yside="left")
        plt.yticks([0, 0.5, 1], ["0%", "50%", "100%"], yside="right")  # P(fertile) as a percentage
        self.refresh()
