"""One cycle's chart as vector shapes in millimetres, drawn alike as SVG (HTML) and as PDF vectors.

The chart is computed once as a `Figure` of plain shapes; `svg` writes it for the HTML pack and
the PDF renderer draws the same shapes, so both packs show the same chart. Temperatures sit on
the cycle-day axis with the coverline, the rise, the day of confirmation and the estimated
ovulation; flow, mucus, LH, hCG and scan rows line up under the same days; the current cycle
adds P(fertile) for the coming days.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from datetime import date, timedelta
from html import escape

from caseload.core.analysis import CycleRecord
from caseload.core.model import MUCUS_SCALE, Flow, Kind, Observation
from caseload.presentation.days import iso_day, short_day

WIDTH = 180.0  # mm: fits A4 and Letter inside 15 mm margins
LEFT = 19.0  # room for the row labels
RIGHT = 3.0
TOP = 8.0
TEMP_HEIGHT = 46.0
NO_TEMP_HEIGHT = 8.0  # a cycle charted without temperatures keeps a thin band for its markers
ROW_HEIGHT = 5.0
MAX_DAYS = 60  # a longer cycle is drawn to day 60 and says so: narrower days could not be read

INK, GRID, FAINT = "#222222", "#d0d0d0", "#888888"
TEMP_COLOUR, EXCLUDED_COLOUR = "#1f4e9c", "#9a9a9a"
COVERLINE_COLOUR, RISE_COLOUR, OVULATION_COLOUR = "#b35900", "#2e7d32", "#7b1fa2"
FLOW_COLOUR, MUCUS_COLOUR, FERTILE_COLOUR = "#c62828", "#4f83b3", "#e6a100"
FLOW_LEVEL = {Flow.SPOTTING.value: 0.25, Flow.LIGHT.value: 0.5, Flow.MODERATE.value: 0.75, Flow.HEAVY.value: 1.0}
SIGN_WORDS = {"positive": "+", "negative": "-"}


@dataclass(frozen=True)
class Line:
    x1: float
    y1: float
    x2: float
    y2: float
    colour: str = INK
    width: float = 0.2
    dash: bool = False


@dataclass(frozen=True)
class Polyline:
    points: tuple[tuple[float, float], ...]
    colour: str
    width: float = 0.35


@dataclass(frozen=True)
class Dot:
    x: float
    y: float
    r: float
    colour: str
    hollow: bool = False


@dataclass(frozen=True)
class Box:
    x: float
    y: float
    w: float
    h: float
    colour: str


@dataclass(frozen=True)
class Label:
    x: float
    y: float  # baseline
    text: str
    size: float = 2.2  # mm of type height
    colour: str = INK
    anchor: str = "start"  # start, middle or end
    bold: bool = False


Shape = Line | Polyline | Dot | Box | Label


@dataclass(frozen=True)
class Figure:
    width: float
    height: float
    shapes: tuple[Shape, ...]


@dataclass(frozen=True)
class CycleInput:
    """What one chart shows: the cycle, its current observations, the day it ends on the page."""

    number: int
    record: CycleRecord
    observations: tuple[Observation, ...]
    last_day: date  # the cycle's end, or today for the open cycle
    p_fertile: Mapping[date, float]  # only for the current cycle; empty otherwise


def _temperature_range(values: Sequence[float]) -> tuple[float, float]:
    low = min([36.2, *values]) - 0.05
    high = max([37.0, *values]) + 0.05
    return round(low, 1), round(high + 0.049, 1)


def _rows(chart: CycleInput) -> list[str]:
    kinds = {o.kind for o in chart.observations}
    rows = ["Flow", "Mucus", "LH"]
    rows += [name for name, kind in (("hCG", Kind.HCG), ("Scan mm", Kind.SCAN)) if kind in kinds]
    return rows + (["P(fertile)"] if chart.p_fertile else [])


def cycle_figure(chart: CycleInput) -> Figure:
    """The chart of one cycle, day 1 at the left."""
    rec, start = chart.record, chart.record.start
    drawn_to = max([chart.last_day, *chart.p_fertile.keys()])
    days = min((drawn_to - start).days + 1, MAX_DAYS)
    dx = (WIDTH - LEFT - RIGHT) / days
    shapes: list[Shape] = []

    def x_of(day: date) -> float:
        return LEFT + ((day - start).days + 0.5) * dx

    def shown(day: date) -> bool:
        return 0 <= (day - start).days < days

    temps = [o for o in chart.observations if o.kind == Kind.TEMP and o.value.number is not None and shown(o.day)]
    low, high = _temperature_range([o.value.number for o in temps])
    height = TEMP_HEIGHT if temps else NO_TEMP_HEIGHT
    bottom = TOP + height

    def y_of(celsius: float) -> float:
        return bottom - (celsius - low) / (high - low) * height

    length = "open" if rec.is_open else f"{rec.length} days"
    title = f"Cycle {chart.number}: from {iso_day(start)} ({length})"
    if (drawn_to - start).days + 1 > MAX_DAYS:
        title += f"; drawn to day {MAX_DAYS}"
    shapes.append(Label(0, 4.5, title, 3.0, bold=True))
    if temps:
        shapes += _temperature_grid(low, high, y_of, days, dx)
    else:
        shapes.append(Line(LEFT, bottom, WIDTH - RIGHT, bottom, GRID, 0.12))
        shapes.append(Label(LEFT + 0.8, TOP + 5.0, "No temperatures charted in this cycle.", 2.2, FAINT))
    shapes += _temperature_marks(chart, x_of, y_of, shown, temps, bottom)
    rows = _rows(chart)
    axis_top = bottom + 0.5
    for i in range(days):
        if days <= 35 or (i + 1) % 2 == 1:
            shapes.append(Label(LEFT + (i + 0.5) * dx, axis_top + 3.0, str(i + 1), 2.0, anchor="middle"))
    shapes.append(Label(LEFT - 1.5, axis_top + 3.0, "Cycle day", 2.0, FAINT, "end"))
    row_top = axis_top + 4.0
    for n, name in enumerate(rows):
        top = row_top + n * ROW_HEIGHT
        shapes.append(Line(0, top, WIDTH - RIGHT, top, GRID, 0.15))
        shapes.append(Label(LEFT - 1.5, top + 3.5, name, 2.2, INK, "end"))
        shapes += _row_marks(name, chart, top, x_of, dx, shown)
    dates_top = row_top + len(rows) * ROW_HEIGHT
    shapes.append(Line(0, dates_top, WIDTH - RIGHT, dates_top, GRID, 0.15))
    for i in range(0, days, 7):
        day = start + timedelta(days=i)
        shapes.append(Label(LEFT + (i + 0.5) * dx, dates_top + 3.2, short_day(day), 2.0, FAINT, "middle"))
    legend_y = dates_top + 7.5
    shapes += _legend(legend_y)
    return Figure(WIDTH, legend_y + 2.0, tuple(shapes))


def _temperature_grid(low: float, high: float, y_of, days: int, dx: float) -> list[Shape]:
    shapes: list[Shape] = []
    steps = round((high - low) * 10)
    label_every = 1 if steps <= 12 else 2
    for k in range(steps + 1):
        celsius = round(low + k / 10, 1)
        y = y_of(celsius)
        shapes.append(Line(LEFT, y, WIDTH - RIGHT, y, GRID, 0.12))
        if k % label_every == 0:
            shapes.append(Label(LEFT - 1.5, y + 0.8, f"{celsius:.1f}", 2.0, INK, "end"))
    for i in range(days + 1):
        x = LEFT + i * dx
        shapes.append(Line(x, y_of(high), x, y_of(low), GRID, 0.12))
    shapes.append(Label(1.0, TOP + 2.5, "BBT °C", 2.2, FAINT))
    return shapes


def _temperature_marks(chart: CycleInput, x_of, y_of, shown, temps: list[Observation], bottom: float) -> list[Shape]:
    rec, shapes = chart.record, []
    shift, top = chart.record.shift, TOP
    if shift.coverline is not None:
        y = y_of(shift.coverline)
        shapes.append(Line(LEFT, y, WIDTH - RIGHT, y, COVERLINE_COLOUR, 0.35, dash=True))
        # At the left, above the line: the low readings before a rise lie under the coverline by its definition.
        shapes.append(Label(LEFT + 0.8, y - 0.8, f"coverline {shift.coverline:.2f}", 2.0, COVERLINE_COLOUR))
    marks = [(shift.first_high, "rise", RISE_COLOUR)]
    if shift.confirmed_on is not None:
        marks.append((shift.confirmed_on, "confirmed", RISE_COLOUR))
    marks.append((rec.markers.ovulation, "ovulation (est.)", OVULATION_COLOUR))
    if chart.p_fertile:
        marks.append((chart.last_day, "today", FAINT))
    for n, (day, word, colour) in enumerate(marks):
        if day is not None and shown(day):
            x = x_of(day)
            shapes.append(Line(x, top, x, bottom, colour, 0.3, dash=word != "rise"))
            shapes.append(Label(x + 0.6, top + 2.2 + 2.4 * (n % 3), word, 2.0, colour))
    valid = [o for o in temps if not o.disturbed]
    if len(valid) > 1:
        shapes.append(Polyline(tuple((x_of(o.day), y_of(o.value.number)) for o in valid), TEMP_COLOUR))
    for o in temps:
        if o.disturbed:
            shapes.append(Dot(x_of(o.day), y_of(o.value.number), 0.75, EXCLUDED_COLOUR, hollow=True))
        else:
            shapes.append(Dot(x_of(o.day), y_of(o.value.number), 0.65, TEMP_COLOUR))
    return shapes


def _sign(o: Observation) -> str:
    if o.value.number is not None:
        return f"{o.value.number:g}"
    return SIGN_WORDS.get(o.value.word or "", o.value.word or "")


def _row_marks(name: str, chart: CycleInput, top: float, x_of, dx: float, shown) -> list[Shape]:
    shapes: list[Shape] = []
    inner = ROW_HEIGHT - 1.0
    for o in chart.observations:
        if not shown(o.day):
            continue
        x = x_of(o.day)
        if name == "Flow" and o.kind == Kind.BLEED:
            h = inner * FLOW_LEVEL.get(o.value.word or "", 0.25)
            shapes.append(Box(x - dx * 0.35, top + ROW_HEIGHT - 0.5 - h, dx * 0.7, h, FLOW_COLOUR))
        elif name == "Mucus" and o.kind == Kind.MUCUS and o.value.word in MUCUS_SCALE:
            h = inner * (MUCUS_SCALE.index(o.value.word) + 1) / len(MUCUS_SCALE)
            shapes.append(Box(x - dx * 0.35, top + ROW_HEIGHT - 0.5 - h, dx * 0.7, h, MUCUS_COLOUR))
        elif (name, o.kind) in (("LH", Kind.LH), ("hCG", Kind.HCG)):
            shapes.append(Label(x, top + 3.6, _sign(o), 2.4 if o.value.number is None else 1.7, INK, "middle", True))
        elif name == "Scan mm" and o.kind == Kind.SCAN and o.value.scan is not None and o.value.scan.follicles_mm:
            shapes.append(Label(x, top + 3.6, f"{max(o.value.scan.follicles_mm):g}", 1.7, INK, "middle", True))
    if name == "P(fertile)":
        for day, p in chart.p_fertile.items():
            if shown(day):
                h = inner * p
                shapes.append(Box(x_of(day) - dx * 0.35, top + ROW_HEIGHT - 0.5 - h, dx * 0.7, h, FERTILE_COLOUR))
    return shapes


def _legend(y: float) -> list[Shape]:
    return [
        Dot(LEFT + 1, y - 0.7, 0.65, TEMP_COLOUR),
        Label(LEFT + 2.5, y, "reading", 2.0),
        Dot(LEFT + 15, y - 0.7, 0.75, EXCLUDED_COLOUR, hollow=True),
        Label(LEFT + 16.5, y, "excluded (disturbed)", 2.0),
        Line(LEFT + 42, y - 0.7, LEFT + 48, y - 0.7, COVERLINE_COLOUR, 0.35, dash=True),
        Label(LEFT + 49.5, y, "coverline", 2.0),
        Line(LEFT + 63, y - 2.0, LEFT + 63, y + 0.5, RISE_COLOUR, 0.3),
        Label(LEFT + 64.5, y, "rise (three-over-six)", 2.0),
        Line(LEFT + 92, y - 2.0, LEFT + 92, y + 0.5, OVULATION_COLOUR, 0.3, dash=True),
        Label(LEFT + 93.5, y, "estimated ovulation", 2.0),
        Label(WIDTH - RIGHT, y, "bar height: amount of flow, mucus, P(fertile)", 2.0, FAINT, "end"),
    ]


def _svg_shape(s: Shape) -> str:
    if isinstance(s, Line):
        dash = ' stroke-dasharray="1.2 0.8"' if s.dash else ""
        return (f'<line x1="{s.x1:.2f}" y1="{s.y1:.2f}" x2="{s.x2:.2f}" y2="{s.y2:.2f}" stroke="{s.colour}" '
                f'stroke-width="{s.width}"{dash}/>')
    if isinstance(s, Polyline):
        points = " ".join(f"{x:.2f},{y:.2f}" for x, y in s.points)
        return f'<polyline points="{points}" fill="none" stroke="{s.colour}" stroke-width="{s.width}"/>'
    if isinstance(s, Dot):
        fill = "white" if s.hollow else s.colour
        return f'<circle cx="{s.x:.2f}" cy="{s.y:.2f}" r="{s.r}" fill="{fill}" stroke="{s.colour}" stroke-width="0.25"/>'
    if isinstance(s, Box):
        return f'<rect x="{s.x:.2f}" y="{s.y:.2f}" width="{s.w:.2f}" height="{s.h:.2f}" fill="{s.colour}"/>'
    weight = ' font-weight="bold"' if s.bold else ""
    return (f'<text x="{s.x:.2f}" y="{s.y:.2f}" font-size="{s.size}" fill="{s.colour}" text-anchor="{s.anchor}"'
            f'{weight}>{escape(s.text)}</text>')


def svg(figure: Figure, description: str) -> str:
    """The figure as an inline SVG element, sized in millimetres."""
    body = "\n".join(_svg_shape(s) for s in figure.shapes)
    return (f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {figure.width} {figure.height:.2f}" '
            f'width="{figure.width}mm" height="{figure.height:.2f}mm" role="img" font-family="sans-serif">'
            f"<title>{escape(description)}</title>\n{body}\n</svg>")
