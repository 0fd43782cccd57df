"""The record's cycle chart: every marker row and the day numbers sit in the columns of the
temperature points, for short and long cycles at every width, and left-out readings are drawn
apart and named in the legend.

The checks read the drawn lines, not the layout arithmetic: a point's column is where its glyph
is, a day number's column is where its digits start, a mark's column is where it is printed.
"""

from __future__ import annotations

import re
import unicodedata
from dataclasses import replace
from datetime import date

import pytest
from hypothesis import given
from hypothesis import strategies as st

from caseload.application.caseload_view import show_patient
from caseload.tui.cycle_view import CycleView, cycle_view
from caseload.tui.day_columns import LABEL_WIDTH, RIGHT_MARGIN, MIN_DAY_WIDTH, day_columns
from caseload.tui.screens.record import RecordScreen
from caseload.tui.widgets.cycle_chart import ABOVE, BELOW, BRAILLE_BITS, LEFT_OUT, CycleChart, legend_lines, plot_lines, scale
from caseload.tui.widgets.marker_strip import BAR_LEVELS, marker_lines
from tests.tui.conftest import settle
from tests.tui.fixture_store import FLAGGED_DAY, LONG_DAYS, TODAY, add_long_cycle

POINTS = "●×↑↓"
LENGTHS = (21, 29, 35, 60, 106)
WIDTHS = (80, 100, 120, 160)


def synthetic_view(days: int) -> CycleView:
    """A cycle with a reading and a mark in every row on every day (two-character scans every third
    day), a disturbed reading each week and a fever beyond the scale, today two thirds through."""
    temps, left_out = [], []
    for day in range(1, days + 1):
        celsius = round(36.30 + 0.05 * (day % 5) + (0.35 if day > days // 2 else 0.0), 2)
        if day == days - 1:
            left_out.append((day, 38.6, "fever"))
        elif day % 7 == 0:
            left_out.append((day, celsius, "disturbed: illness"))
        else:
            temps.append((day, celsius))
    today = max(1, (2 * days) // 3)
    every = range(1, days + 1)
    return CycleView(
        index=0, count=1, start=date(2026, 1, 1), is_open=True, last_day=days, today_day=today,
        temps=tuple(temps), left_out=tuple(left_out), coverline=36.52, first_high_day=None,
        confirmed_day=days // 2 + 3, ovulation_day=None, ovulation_method=None,
        fertile=tuple((day, (day % 9) / 8) for day in range(today, days + 1)),
        strip={
            "flow": {day: "▅" for day in range(1, 6)},
            "mucus": {day: str(day % 6) for day in every},
            "LH": {day: "+-"[day % 2] for day in every},
            "hCG": {day: "-" for day in every},
            "scan": {day: "12" for day in range(1, days + 1, 3)},
        },
    )


def point_columns(plot: list[str]) -> list[int]:
    """The columns holding a reading's glyph, left to right (one reading a day)."""
    found = sorted(c for line in plot for c, ch in enumerate(line) if ch in POINTS)
    assert len(found) == len(set(found)), "two readings drawn in one column"
    return found


def row(lines: list[str], name: str) -> str:
    return next(line for line in lines if line[:LABEL_WIDTH].strip(" ◂") == name)


def mark_columns(line: str) -> list[int]:
    return [m.start() for m in re.finditer(r"\S+", line[LABEL_WIDTH:LABEL_WIDTH + 10_000])]


def drawn(view: CycleView, width: int, first: int, rows: int = 9) -> tuple[list[str], list[str], int]:
    """The plot and the rows of `view` with the window moved to `first`, and where it really starts."""
    columns = day_columns(width, view.last_day).starting(first)
    plot = [t.plain for t in plot_lines(view, columns, rows)]
    return plot, [t.plain for t in marker_lines(view, columns)], columns.first


@pytest.mark.parametrize("days", LENGTHS)
@pytest.mark.parametrize("width", WIDTHS)
def test_every_marker_row_sits_under_its_days_reading(days, width):
    # Alignment and coverage are this chart's own layout rule (common practice for paper BBT charts:
    # one column per day shared by the temperature grid and the sign rows below it).
    view = synthetic_view(days)
    seen: set[int] = set()
    first = 1
    while True:
        plot, strip, first = drawn(view, width, first)
        assert all(len(line) <= width for line in plot + strip)
        points = point_columns(plot)
        window = range(first, first + len(points))
        seen.update(window)
        for name in ("mucus", "LH", "hCG"):
            assert [c + LABEL_WIDTH for c in mark_columns(row(strip, name))] == points, name
        scans = [c + LABEL_WIDTH for c in mark_columns(row(strip, "scan"))]
        assert scans == [points[d - first] for d in window if d % 3 == 1]
        flow = [c + LABEL_WIDTH for c in mark_columns(row(strip, "flow"))]
        assert flow == [points[d - first] for d in window if d <= 5]
        fertile = [c + LABEL_WIDTH for c in mark_columns(row(strip, "fertile"))]
        assert fertile == [points[d - first] for d in window if d >= view.today_day]
        numbers = {int(m.group()): m.start() for m in re.finditer(r"\d+", row(strip, "day"))}
        assert numbers and all(points[n - first] == c for n, c in numbers.items())
        if window[-1] >= days:
            break
        first = window[-1] + 1
    assert seen == set(range(1, days + 1))  # the whole cycle, not the first 36 days


@pytest.mark.parametrize("width", WIDTHS)
def test_a_cycle_that_fits_is_drawn_whole_and_a_long_one_in_windows(width):
    room = width - LABEL_WIDTH - RIGHT_MARGIN
    for days in LENGTHS:
        columns = day_columns(width, days)
        assert (columns.shown == days) == (days * MIN_DAY_WIDTH <= room)
        assert columns.width >= MIN_DAY_WIDTH and columns.x(columns.last) + columns.width <= width - RIGHT_MARGIN


@given(width=st.integers(30, 300), days=st.integers(1, 200), first=st.integers(-50, 250), today=st.integers(1, 200))
def test_day_columns_are_evenly_spaced_and_a_window_keeps_inside_the_cycle(width, days, first, today):
    columns = day_columns(width, days).starting(first)
    assert 1 <= columns.first <= columns.last <= days
    xs = [columns.column(d) for d in range(columns.first, columns.last + 1)]
    assert all(b - a == columns.width for a, b in zip(xs, xs[1:]))
    assert xs[0] == LABEL_WIDTH and xs[-1] + columns.width <= max(width - RIGHT_MARGIN, LABEL_WIDTH + MIN_DAY_WIDTH)
    assert columns.column(columns.first - 1) is None and columns.column(columns.last + 1) is None
    around = columns.around(min(today, days))
    assert around.first <= min(today, days) <= around.last


@pytest.mark.parametrize("days", LENGTHS)
def test_fertile_bars_have_their_own_row_and_cover_no_reading(days):
    view = synthetic_view(days)
    plot, strip, _ = drawn(view, 120, 1)
    bars = set(BAR_LEVELS) - {" "}
    assert not any(ch in bars for line in plot for ch in line[LABEL_WIDTH:])
    last = day_columns(120, days).last
    assert len(point_columns(plot)) == min(days, last)  # a reading every day: each one is drawn


def test_left_out_readings_are_crosses_or_arrows_and_the_scale_ignores_them():
    view = synthetic_view(29)
    s = scale(view, 9)
    # A fever 38.6 C must not stretch a scale of 36.30-36.85 readings: that would flatten the shift.
    assert s.step == 0.1 and s.value(0) < 37.5
    for d, t in view.temps:
        assert abs(s.value(s.row(t)) - t) <= s.step / 2 + 1e-9
    plot, strip, _ = drawn(view, 120, 1)
    points = point_columns(plot)
    glyph = {points.index(c) + 1: line[c] for line in plot for c in points if line[c] in POINTS}
    assert {d for d, g in glyph.items() if g == "×"} == {7, 14, 21}
    assert glyph[28] == "↑" and plot[0][points[27]] == "↑"  # the fever, above the scale's top row
    assert all(g == "●" for d, g in glyph.items() if d not in (7, 14, 21, 28))
    legend = " ".join(t.plain for t in legend_lines(view, day_columns(120, 29), 120))
    assert "× left out of the shift (flagged or fever)" in legend and "┄ coverline 36.52 C" in legend


def test_braille_bits_are_the_unicode_dot_numbers():
    # Unicode braille patterns (U+2800 block): dots 1, 2, 3, 7 down the left column, 4, 5, 6, 8 down the right.
    for column, dots in enumerate(("1237", "4568")):
        for row_in_cell, dot in enumerate(dots):
            name = unicodedata.name(chr(0x2800 + BRAILLE_BITS[column][row_in_cell]))
            assert name == f"BRAILLE PATTERN DOTS-{dot}"


async def open_by_name(pilot, name: str) -> RecordScreen:
    await settle(pilot)
    await pilot.press("slash", *name, "enter", "enter")
    await settle(pilot)
    assert isinstance(pilot.app.screen, RecordScreen)
    return pilot.app.screen


@pytest.mark.parametrize("size", [(80, 24), (100, 30), (120, 40), (160, 40)])
async def test_long_cycle_record_lines_up_and_moves_with_the_arrows(app_as, service_ctx, size):
    add_long_cycle(service_ctx("nell"))
    async with app_as("nell").run_test(size=size) as pilot:
        screen = await open_by_name(pilot, "Lena")
        chart = screen.query_one(CycleChart)
        assert screen.focused is chart
        view = chart._view
        assert view.today_day == LONG_DAYS and view.last_day >= LONG_DAYS

        def shown() -> tuple[list[str], list[str], list[int]]:
            lines = [t.plain for t in chart.lines()]
            day_row = next(i for i, line in enumerate(lines) if line.startswith("day"))
            return lines[:day_row], lines[day_row:], point_columns(lines[:day_row])

        plot, strip, points = shown()
        assert len(plot) >= 7  # a readable plot even at 80x24 (common practice: from memory)
        numbers = {int(m.group()): m.start() for m in re.finditer(r"\d+", row(strip, "day"))}
        assert LONG_DAYS in numbers  # today is on screen
        first = chart.columns().first
        assert all(points[n - first] == c for n, c in numbers.items() if n - first < len(points))
        mucus = [c + LABEL_WIDTH for c in mark_columns(row(strip, "mucus"))]
        assert mucus == [points[d - first] for d in range(first, first + len(points)) if d % 2 == 0]
        # Earlier days come in from the left, the plot and the rows together, until the flagged day shows.
        for _ in range(20):
            if chart.columns().column(FLAGGED_DAY) is not None:
                break
            await pilot.press("left")
        plot, strip, points = shown()
        columns = chart.columns()
        flagged_at = columns.column(FLAGGED_DAY)
        # Left out: a cross, or an arrow at the edge when the reading is beyond the counted readings' scale.
        assert flagged_at is not None and any(line[flagged_at] in (LEFT_OUT, ABOVE, BELOW) for line in plot)
        assert [c + LABEL_WIDTH for c in mark_columns(row(strip, "mucus"))] == [
            columns.column(d) for d in range(columns.first, columns.last + 1) if d % 2 == 0]
        assert "× left out of the shift (flagged or fever)" in " ".join(strip)  # the legend, under the rows


def test_the_chart_takes_left_out_readings_from_the_shift_rules(service_ctx):
    # P0002's fever (38.3 C, yesterday) is left out by the shift rules (fever threshold 38.0 C, design
    # contract); the chart draws it apart and not as a counted reading.
    record = show_patient(service_ctx("ada"), "P0002")
    view = cycle_view(record, len(record.analysis.cycles) - 1, TODAY)
    yesterday = view.today_day - 1
    assert (yesterday, 38.3, "fever") in view.left_out
    assert all(day != yesterday for day, _ in view.temps)
    excluded = record.analysis.current.shift.excluded
    assert len(view.left_out) == len(excluded)


def test_marks_that_fill_their_columns_are_told_apart_by_underlining_every_other_day():
    view = replace(synthetic_view(30), strip={"mucus": {day: "sk" for day in range(10, 14)} | {20: "wa"}})
    columns = day_columns(80, 30)  # two columns a day: two-letter marks meet their neighbours
    (mucus,) = [line for line in marker_lines(view, columns) if line.plain.startswith("mucus")]
    underlined = {span.start for span in mucus.spans if "underline" in str(span.style)}
    assert underlined == {columns.column(10), columns.column(12)}  # not 11, 13, nor 20 standing alone
