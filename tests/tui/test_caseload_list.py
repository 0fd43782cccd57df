"""The home list: every patient under care, the service's cycle days and order, filters and search."""

from __future__ import annotations

from caseload.application.caseload_view import list_caseload
from caseload.tui.widgets.caseload_table import CaseloadTable
from caseload.tui.widgets.filter_bar import FilterBar
from caseload.tui.widgets.status_line import StatusLine
from tests.tui.conftest import settle
from tests.tui.fixture_store import ODD_NAME


def shown_rows(app) -> list[str]:
    table = app.screen.query_one(CaseloadTable)
    return [row.value for row in table.rows]


def cell(app, patient_id: str, column: str) -> str:
    table = app.screen.query_one(CaseloadTable)
    return table.get_cell(patient_id, column).plain


async def test_list_shows_the_service_order_and_cycle_days(app_as, service_ctx):
    lines = list_caseload(service_ctx("ada"))
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        assert shown_rows(app) == [line.patient.id for line in lines]
        assert "P0005" not in shown_rows(app)  # discharged
        for line in lines:
            assert cell(app, line.patient.id, "cd").strip() == str(line.cycle_day)
        # Built so that P0001 is on cycle day 18 and P0003 on day 5 (day 1 = first day of flow).
        assert cell(app, "P0001", "cd").strip() == "18"
        assert cell(app, "P0003", "cd").strip() == "5"


async def test_top_alert_and_count_of_more(app_as, service_ctx):
    line = next(l for l in list_caseload(service_ctx("ada")) if l.patient.id == "P0002")
    assert len(line.alerts) == 2
    app = app_as("ada")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        text = cell(app, "P0002", "alert")
        assert text.startswith(line.top_alert.severity.value)
        assert text.endswith("+1 more")


async def test_header_counts_open_alerts_by_severity(app_as, service_ctx):
    lines = list_caseload(service_ctx("ada"))
    today_count = sum(1 for l in lines for a in l.alerts if a.severity.value == "today")
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        status = app.screen.query_one(StatusLine).render().plain
        assert "1 Dec 2026" in status and "Ada Admin (admin)" in status
        assert f"today {today_count}" in status


async def test_a_nurse_starts_on_her_own_patients_and_can_see_all(app_as):
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        assert shown_rows(app) == ["P0002", "P0001"]
        await pilot.press("m")
        await settle(pilot)
        assert set(shown_rows(app)) == {"P0001", "P0002", "P0003", "P0004"}


async def test_search_narrows_as_you_type_and_escape_clears(app_as):
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("slash", *"lin")
        await pilot.pause()
        assert shown_rows(app) == ["P0002"]  # Rosa Lind
        await pilot.press("escape")
        await pilot.pause()
        assert len(shown_rows(app)) == 4
        await pilot.press("slash", *"p000")
        await pilot.pause()
        assert len(shown_rows(app)) == 4


async def test_filters_by_alert_kind_and_plan(app_as):
    app = app_as("ada")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        app.screen.query_one("#alert-kind").value = "logging-gap"
        await pilot.pause()
        assert shown_rows(app) == ["P0004"]
        app.screen.query_one("#alert-kind").value = "any"
        app.screen.query_one("#plan").value = "timed"
        await pilot.pause()
        assert shown_rows(app) == ["P0002"]
        assert app.screen.query_one(FilterBar).filters.plan == "timed"


async def test_user_text_is_shown_literally(app_as):
    app = app_as("ada")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        shown = cell(app, "P0003", "patient")
        assert "[bold]" in shown  # not taken as markup
        assert "\x1b" not in shown and "\\x1b" in shown  # the escape character is shown, not sent
        assert ODD_NAME.split("\x1b")[0] in shown
