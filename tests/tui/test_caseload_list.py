"""The home list: every patient under care, the service's cycle days and order, filters and search."""

from __future__ import annotations

import asyncio
from dataclasses import replace

from caseload.application.caseload_view import list_caseload
from caseload.application.clinic import Clinic, Identity
from caseload.application.staff import init_store
from caseload.application.entries import log_entry
from caseload.application.patients import add_patient
from caseload.core.model import Severity
from caseload.store import Store
from caseload.tui.app import make_app
from caseload.tui.screens.record import RecordScreen
from caseload.tui.widgets import caseload_table
from caseload.tui.widgets.caseload_table import CaseloadTable, layout, row_cells
from caseload.tui.widgets.filter_bar import FilterBar, Scope
from caseload.tui.widgets.status_line import StatusLine
from tests.tui.conftest import settle
from tests.tui.fixture_store import ODD_NAME, TODAY


def shown_rows(app) -> list[str]:
    table = app.screen.query_one(CaseloadTable)
    return table.patient_ids


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


async def test_an_idle_list_asks_the_store_one_cheap_question_and_reads_only_what_changed(app_as, service_ctx):
    other = service_ctx("nora")  # another terminal: a connection of its own
    app = app_as("ada", refresh_seconds=0.1)
    reads: list[str] = []
    clinic = app.clinic
    read_all, read_since = clinic.caseload_read, clinic.caseload_since
    clinic.caseload_read = lambda: reads.append("all") or read_all()
    clinic.caseload_since = lambda mark, lines: reads.append("since") or read_since(mark, lines)
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await asyncio.sleep(0.5)  # several polls with nothing committed elsewhere
        await settle(pilot)
        assert reads == ["all"]
        before = {line.patient.id: line for line in app.roster}
        log_entry(other, "P0004", "temp", "36.48")
        await asyncio.sleep(0.3)
        await settle(pilot)
        assert reads == ["all", "since"]
        assert cell(app, "P0004", "last") == "0d"  # was 5d
        assert [e.value.number for e in other.store.entries.for_patient("P0004")][-1] == 36.48
        after = {line.patient.id: line for line in app.roster}
        assert all(after[pid] is before[pid] for pid in before if pid != "P0004")  # the others were not read again


async def test_a_patient_with_no_nurse_is_under_unassigned_for_every_nurse(app_as, service_ctx):
    add_patient(service_ctx("phil"), "P0006", "Wren Newcaller", "1996-02-02")  # a clerk registers her, no nurse
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("u")  # typed before the list is read
        await settle(pilot)
        assert shown_rows(app) == ["P0006"]
        assert app.screen.query_one(FilterBar).filters.scope is Scope.UNASSIGNED
        assert "[unassigned]" in app.screen.query_one("#mine").render().plain
        await pilot.press("u", "m")  # back to all, then to her own, typed with no pause
        await settle(pilot)
        assert shown_rows(app) == ["P0002", "P0001"]
        await pilot.press("u", "enter")  # straight to the newcomer's record
        await settle(pilot)
        assert isinstance(app.screen, RecordScreen) and app.screen.patient_id == "P0006"
    assert service_ctx("ada").store.patients.get("P0006").nurse_id is None


async def test_at_80_columns_names_keep_their_room_and_cycle_day_stays(app_as, service_ctx):
    for pid, name in (("P0006", "Siobhan Keane"), ("P0007", "Oksana Shevchenko")):
        add_patient(service_ctx("nell"), pid, name, "1990-01-01", nurse="nell")
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        table = app.screen.query_one(CaseloadTable)
        # The next event gives way to the names and the alert; cycle day and days since the last entry stay.
        assert table.column_keys() == ["patient", "cd", "phase", "alert", "last"]
        assert cell(app, "P0006", "patient") == "P0006 Siobhan Keane"
        assert cell(app, "P0007", "patient") == "P0007 Oksana Shevchenko"
        assert cell(app, "P0001", "cd").strip() == "18"
        await pilot.resize_terminal(119, 40)
        await settle(pilot)
        assert "plan" not in table.column_keys()
        await pilot.resize_terminal(120, 40)
        await settle(pilot)
        assert table.column_keys()[-2:] == ["plan", "nurse"]
        assert cell(app, "P0007", "nurse") == "nell"


def test_the_next_event_gives_way_only_when_names_and_alerts_need_the_room():
    keys = lambda width, names: [c.key for c, _ in layout(width, names)]  # noqa: E731
    assert "next" not in keys(80, len("P0007 Oksana Shevchenko "))
    assert "next" in keys(80, len("P0001 Ann Lee "))
    assert "next" in keys(100, len("P0007 Oksana Shevchenko "))


async def test_without_colour_urgent_is_reversed_and_today_bold(app_as, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        table = app.screen.query_one(CaseloadTable)
        flagged = next(line for line in app.roster if line.alerts)
        table.show(tuple(replace(flagged, alerts=(replace(flagged.top_alert, severity=severity),),
                                 patient=replace(flagged.patient, id=f"X{n}"))
                         for n, severity in enumerate(Severity)))
        await pilot.pause()
        seen = {}
        for y in range(1, table.row_count + 1):
            for segment in table.render_line(y):
                for severity in Severity:
                    if f"{severity.value} " in segment.text:
                        seen[severity] = segment.style
        plain = seen[Severity.SOON]
        assert seen[Severity.URGENT].reverse and seen[Severity.URGENT].bold
        assert seen[Severity.TODAY].bold and not seen[Severity.TODAY].dim
        assert not plain.bold and not plain.reverse  # ordinary text, for comparison


async def test_a_large_caseload_draws_only_the_rows_in_view(app_as, monkeypatch):
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        table = app.screen.query_one(CaseloadTable)
        many = tuple(replace(line, patient=replace(line.patient, id=f"X{i:05d}"))
                     for i in range(2500) for line in app.roster)  # 10,000 rows
        drawn = []
        monkeypatch.setattr(caseload_table, "row_cells", lambda line, *how: drawn.append(line) or row_cells(line, *how))
        table.show(many)
        await pilot.pause()
        assert 0 < len(drawn) <= 2 * table.size.height
        drawn.clear()
        await pilot.press("end")
        await pilot.pause()
        assert table.current_patient_id() == many[-1].patient.id
        assert many[-1] in drawn and len(drawn) <= 2 * table.size.height


async def test_an_empty_caseload_says_so_once_read(tmp_path):
    with Store(tmp_path / "empty.db") as store:
        init_store(store, "ada", "Ada Admin", "ada-os")
        app = make_app(Clinic(store, Identity("ada-os"), date_of_record=TODAY), refresh_seconds=60)
        async with app.run_test(size=(80, 24)) as pilot:
            await settle(pilot)
            assert app.screen.query_one("#list-note").render().plain == "0 of 0 patients"
