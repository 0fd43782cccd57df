"""The alert queue and what each role is offered: handling with a note, phone staff kept to routine work."""

from __future__ import annotations

from caseload.core.model import AlertState, Role
from caseload.application.alert_handling import list_alerts
from caseload.application.caseload_view import show_patient
from caseload.tui.record_text import outlook_text
from caseload.tui.screens.alert_queue import AlertQueueScreen
from caseload.tui.screens.note_dialog import NoteDialog
from caseload.tui.screens.record import RecordScreen
from caseload.tui.widgets.alert_list import AlertTable
from caseload.tui.widgets.entries_table import EntriesTable
from tests.application.test_caller_view import rising_hcg  # noqa: F401 - fixture
from tests.tui.conftest import settle, fill


def alert_of(ctx, kind: str):
    return next(a for a in list_alerts(ctx) if a.kind == kind)


def queue_ids(app) -> list[int]:
    return [int(r.value) for r in app.screen.query_one(AlertTable).rows if not r.value.startswith("group:")]


async def highlight(pilot, alert_id: int) -> AlertTable:
    table = pilot.app.screen.query_one(AlertTable)
    table.move_cursor(row=table.get_row_index(str(alert_id)))
    await pilot.pause()
    return table


async def test_queue_groups_by_severity_and_acknowledging_takes_an_alert_off(app_as, service_ctx):
    check = service_ctx("ada")
    fever = alert_of(check, "fever")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("a")
        await settle(pilot)
        assert isinstance(app.screen, AlertQueueScreen)
        assert sorted(queue_ids(app)) == sorted(a.id for a in list_alerts(check, nurse="nell"))
        headings = [r.value for r in app.screen.query_one(AlertTable).rows if r.value.startswith("group:")]
        assert headings == ["group:today"]
        await highlight(pilot, fever.id)
        await pilot.press("a")
        await pilot.pause()
        assert isinstance(app.screen, NoteDialog)
        await pilot.press("enter")  # a clinical alert needs a note: nothing happens yet
        assert isinstance(app.screen, NoteDialog)
        await fill(pilot, "called back, advised to rest and re-measure")
        await pilot.press("enter")
        await settle(pilot)
        assert fever.id not in queue_ids(app)
    stored = check.store.alerts.get(fever.id)
    assert stored.state is AlertState.ACKNOWLEDGED and stored.handled_by == "nell"
    assert stored.note == "called back, advised to rest and re-measure"


async def test_opening_an_alert_shows_its_evidence_on_the_record(app_as, service_ctx):
    fever = alert_of(service_ctx("ada"), "fever")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("a")
        await settle(pilot)
        await highlight(pilot, fever.id)
        await pilot.press("enter")
        await settle(pilot)
        screen = app.screen
        assert isinstance(screen, RecordScreen) and screen.patient_id == "P0002"
        assert screen.query_one("TabbedContent").active == "alerts"
        evidence = screen.query_one("#evidence").render().plain
        assert "fever" in evidence and "Source:" in evidence and fever.message in evidence.replace("\n", " ")


async def test_phone_staff_are_offered_routine_alerts_only(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        await pilot.press("a")
        await settle(pilot)
        table = await highlight(pilot, alert_of(check, "fever").id)
        assert table.check_action("handle", ("acknowledge",)) is False
        await pilot.press("a")
        await pilot.pause()
        assert not isinstance(app.screen, NoteDialog)
        gap = alert_of(check, "logging-gap")
        table = await highlight(pilot, gap.id)
        assert table.check_action("handle", ("acknowledge",)) is True
        await pilot.press("r")
        await pilot.pause()
        assert isinstance(app.screen, NoteDialog)
        await pilot.press("enter")  # routine: the note may stay empty
        await settle(pilot)
    stored = check.store.alerts.get(gap.id)
    assert stored.state is AlertState.RESOLVED and stored.handled_by == "phil"


async def test_phone_staff_see_no_amend_void_or_export(app_as):
    app = app_as("phil")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        assert app.screen.check_action("export", ()) is False
        app.push_screen(RecordScreen("P0001"))
        await settle(pilot)
        await pilot.press("5")
        record = app.screen
        assert record.check_action("correct", (True,)) is False and record.check_action("correct", (False,)) is False


async def test_a_nurse_voids_an_entry_with_a_reason(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("nell")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        app.push_screen(RecordScreen("P0001"))
        await settle(pilot)
        await pilot.press("5")
        entries = app.screen.query_one(EntriesTable)
        newest = entries.current_entry()
        assert app.screen.check_action("correct", (False,)) is True
        await pilot.press("v")
        await fill(pilot, "logged for the wrong patient")
        await pilot.press("enter")
        await settle(pilot)
        assert entries.get_cell(str(newest.id), "Status").plain == "void: logged for the wrong patient"
    assert check.store.entries.get(newest.id).voided_reason == "logged for the wrong patient"


async def test_a_refused_action_shows_one_line_and_no_traceback(app_as, service_ctx):
    check = service_ctx("ada")
    fever = alert_of(check, "fever")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("a")
        await settle(pilot)
        await highlight(pilot, fever.id)
        # Another terminal resolves the alert while the note is being typed.
        from caseload.application.alert_handling import resolve

        await pilot.press("a", *"seen")
        resolve(check, fever.id, "handled by phone")
        await pilot.press("enter")
        await settle(pilot)
        notes = [n.message for n in app._notifications]
        assert any(m.startswith(f"alert {fever.id} is resolved") for m in notes)
        assert all("Traceback" not in m and "\n" not in m for m in notes)


async def test_a_supervisor_exports_the_week_de_identified(app_as, service_ctx, tmp_path):
    out = tmp_path / "week.json"
    app = app_as("sue")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        assert app.screen.check_action("export", ()) is True
        await pilot.press("e")
        await pilot.pause()
        # The last whole ISO 8601 week before Tuesday 1 Dec 2026 (23-29 Nov), as `caseload summary` takes.
        assert app.screen.query_one("#week").value == "2026-W48"
        app.screen.query_one("#week").value = "2026-W49"  # the fixture's patients join on 1 Dec
        app.screen.query_one("#format").value = "json"
        await pilot.pause()
        app.screen.query_one("#out").focus()
        await pilot.pause()
        await fill(pilot, str(out))
        await pilot.press("enter")
        await settle(pilot)
    text = out.read_text(encoding="utf-8")
    assert "px-" in text and "Pia Test" not in text  # keyed pseudonyms, no names
    assert service_ctx("ada").store.audit.rows("summary.export")[-1].by_staff == "sue"


def test_the_outlook_gives_the_phone_line_the_pregnancy_without_the_hcg_trend(as_role, rising_hcg):
    # 150 / 120 IU/L in 48 h is a rise of 25% (Barnhart 2004 reads the rise per 48 h): clinical
    # staff read it on the record's outlook tab, the phone line reads the pregnancy and its dates alone.
    nursed = outlook_text(show_patient(as_role(Role.NURSE), rising_hcg.id)).plain
    clerked = outlook_text(show_patient(as_role(Role.PHONE), rising_hcg.id)).plain
    assert "hCG rise per 48 h 25%" in nursed
    assert "hCG rise per 48 h -" in clerked and "25%" not in clerked
    assert clerked.split("hCG rise")[0] == nursed.split("hCG rise")[0]  # the EDD and gestational age alike
