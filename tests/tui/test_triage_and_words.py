"""The list in triage order with the trade's words: a row shows the most pressing alert (never merely
the latest) and how many more, and the record lists them all in the same order (the command line's
order is checked against the same list in tests/application/test_triage_order.py)."""

from __future__ import annotations

from caseload.core.alerts import Candidate
from caseload.core.model import Severity
from caseload.application.caseload_view import list_caseload
from caseload.tui.screens.record import RecordScreen
from caseload.tui.widgets.caseload_table import COLUMNS, CaseloadTable
from caseload.tui.widgets.cycle_chart import CycleChart
from tests.tui.conftest import settle
from tests.tui.fixture_store import TODAY


def raise_alerts(ctx, *raised: tuple[str, str, Severity]) -> None:
    """Alerts as the rules would store them, in this order (later ones get later ids)."""
    with ctx.store.atomic(TODAY):
        for pid, kind, severity in raised:
            c = Candidate(pid, kind, f"{pid}:{kind}:test", severity, TODAY, f"{kind} for {pid}", {}, "rule", "test")
            ctx.store.alerts.raise_alert(ctx.actor, c, TODAY)


def rows(app) -> list[str]:
    return app.screen.query_one(CaseloadTable).patient_ids


def cell(app, patient_id: str, column: str) -> str:
    return app.screen.query_one(CaseloadTable).get_cell(patient_id, column).plain


async def test_the_bleed_is_shown_over_the_window_and_the_record_lists_every_kind(app_as, service_ctx):
    ctx = service_ctx("ada")
    # The window opened first, then the bleed ran past 8 days: both "today".
    raise_alerts(ctx, ("P0001", "window-open", Severity.TODAY), ("P0001", "prolonged-bleeding", Severity.TODAY),
                 ("P0004", "window-open", Severity.TODAY), ("P0003", "fever", Severity.TODAY))
    order = [line.patient.id for line in list_caseload(ctx)]
    more = len(next(line for line in list_caseload(ctx) if line.patient.id == "P0001").alerts) - 1
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        assert rows(app) == order
        # Fever before a long bleed before a window: clinical risk first within "today" (common practice).
        assert order.index("P0003") < order.index("P0001") < order.index("P0004")
        assert cell(app, "P0001", "alert").strip() == f"today long bleed +{more} more"
        # A label too long for the column is cut, never the count of more.
        assert cell(app, "P0004", "alert").strip().startswith("today window op")
        assert cell(app, "P0004", "alert").strip().endswith(" +1 more")
        app.screen.query_one(CaseloadTable).move_cursor(row=order.index("P0001"))
        await pilot.press("enter", "4")
        await settle(pilot)
        assert isinstance(app.screen, RecordScreen)
        table = app.screen.query_one("#patient-alerts")
        shown = [str(table.get_row_at(i)[0]) for i in range(table.row_count)]
        assert "prolonged bleeding" in shown and "fertile window open" in shown
        assert shown.index("prolonged bleeding") < shown.index("fertile window open")


async def test_phases_and_cycle_day_in_the_trade_words(app_as):
    app = app_as("ada")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        table = app.screen.query_one(CaseloadTable)
        assert "phase" in table.column_keys() and [c.label for c in COLUMNS if c.key == "phase"] == ["Phase"]
        # Built: P0001 on cycle day 18 after a textbook rise (luteal), P0003 on day 5 in her bleed.
        assert cell(app, "P0001", "phase").strip() == "luteal"
        assert cell(app, "P0003", "phase").strip() == "menses"
        table.move_cursor(row=rows(app).index("P0001"))
        await pilot.press("enter")
        await settle(pilot)
        title = str(app.screen.query_one("#record-title").render())
        assert "cycle day 18 (from 14 Nov) · luteal phase" in title and "CD" not in title


async def test_mucus_shows_by_its_description_on_the_chart(app_as, service_ctx):
    from caseload.application.entries import log_entry

    log_entry(service_ctx("nell"), "P0001", "mucus", "stretchy")  # today, her cycle day 18
    log_entry(service_ctx("nell"), "P0001", "mucus", "creamy", on="yesterday")
    app = app_as("ada")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        app.screen.query_one(CaseloadTable).move_cursor(row=rows(app).index("P0001"))
        await pilot.press("enter")
        await settle(pilot)
        chart = app.screen.query_one(CycleChart)
        columns = chart.columns()
        lines = [t.plain for t in chart.lines()]
        (mucus,) = [line for line in lines if line.startswith("mucus ") and "·" not in line]
        assert mucus[columns.column(18):columns.column(18) + 2] == "st"
        assert mucus[columns.column(17):columns.column(17) + 2] == "cr"
        assert "mucus dr dry · da damp · sk sticky · cr creamy · wa watery · st stretchy" in " ".join(lines)
