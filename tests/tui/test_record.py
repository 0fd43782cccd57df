"""A patient's record: the chart of the cycle, the cycle history with FIGO, the outlook, corrections."""

from __future__ import annotations

from caseload.application.caseload_view import show_patient
from caseload.tui.screens.record import RecordScreen
from caseload.tui.widgets.cycle_chart import CycleChart
from caseload.tui.widgets.entries_table import EntriesTable
from caseload.presentation.glossary import CAUTION
from tests.tui.conftest import settle


async def open_record(pilot, patient_id: str) -> RecordScreen:
    table = pilot.app.screen.query_one("#caseload")
    table.move_cursor(row=table.get_row_index(patient_id))
    await pilot.press("enter")
    await settle(pilot)
    assert isinstance(pilot.app.screen, RecordScreen)
    return pilot.app.screen


async def test_chart_shows_the_current_cycle_with_its_shift(app_as, service_ctx):
    record = show_patient(service_ctx("ada"), "P0001")
    shift = record.analysis.current.shift
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        screen = await open_record(pilot, "P0001")
        view = screen.query_one(CycleChart)._view
        assert view.is_open and view.today_day == record.analysis.cycle_day == 18
        # Temperatures rise after cycle day 14: the third high reading (day 17) confirms the shift
        # (three-over-six rule, Miolo 1993; Marshall 1968); the line drawn is the highest of the six lows.
        assert view.confirmed_day == (shift.confirmed_on - record.analysis.cycle_start).days + 1 == 17
        assert view.coverline == shift.coverline == 36.44
        chart = screen.query_one(CycleChart)
        flow = next(line.plain for line in chart.lines() if line.plain.startswith("flow"))
        assert flow[chart.columns().column(2)] == "▇"  # heavy on day 2
        assert CAUTION in screen.query_one("#caution").render().plain


async def test_brackets_move_between_cycles(app_as):
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        screen = await open_record(pilot, "P0001")
        assert screen.query_one(CycleChart)._view.index == 4
        await pilot.press("left_square_bracket", "left_square_bracket")
        view = screen.query_one(CycleChart)._view
        assert view.index == 2 and not view.is_open and view.last_day == 28
        await pilot.press("right_square_bracket")
        assert screen.query_one(CycleChart)._view.index == 3


async def test_cycle_table_and_classification(app_as, service_ctx):
    analysis = show_patient(service_ctx("ada"), "P0001").analysis
    app = app_as("ada")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        screen = await open_record(pilot, "P0001")
        await pilot.press("2")
        table = screen.query_one("#cycle-table")
        assert table.row_count == len(analysis.cycles) == 5
        newest_complete = [str(c) for c in table.get_row_at(1)]
        assert newest_complete[2] == "28"  # length
        assert newest_complete[6] == str(analysis.cycles[-2].luteal_length)
        figo = screen.query_one("#classification").render().plain
        assert "FIGO 2018" in figo and f"frequency {analysis.classification.frequency}" in figo


async def test_outlook_shows_ranges_and_the_calendar_rule_state(app_as):
    app = app_as("ada")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        screen = await open_record(pilot, "P0002")
        await pilot.press("3")
        text = screen.query_one("#outlook-text").render().plain
        assert "80% range" in text and "90% range" in text
        assert "needs 6 cycles (has 3)" in text  # Ogino-Knaus needs six recorded cycles
        assert CAUTION in text


async def test_corrections_stay_visible_with_who_and_why(app_as):
    app = app_as("ada")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        screen = await open_record(pilot, "P0002")
        await pilot.press("5")
        table = screen.query_one(EntriesTable)
        corrected = next(e for e in table._by_id.values() if e.superseded_by is not None)
        status = table.get_cell(str(corrected.id), "Status")
        assert status.plain == f"replaced by #{corrected.superseded_by} (nell: reading phoned in again)"
        value = table.get_cell(str(corrected.id), "Value")
        assert any("strike" in str(span.style) for span in value.spans)
