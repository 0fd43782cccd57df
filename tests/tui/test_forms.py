"""Registering a caller, and changing a patient's nurse, plan and status, from the interface.

Keys are pressed in one burst, as a fast typist sends them; each test checks the store and the screen.
The forms go through the Clinic's use cases, so they refuse as `caseload patient add` and
`caseload patient set` do, and a refusal writes nothing.
"""

from __future__ import annotations

import time

from textual.widgets import Input

from caseload.application.entries import patient_entries
from caseload.core.model import Kind, PatientStatus, Plan
from caseload.tui.screens.alert_queue import AlertQueueScreen
from caseload.tui.screens.patient_care import PatientDialog
from caseload.tui.screens.quick_log import QuickLogScreen
from caseload.tui.screens.record import RecordScreen
from caseload.tui.screens.register import RegisterDialog
from caseload.tui.widgets.caseload_table import CaseloadTable
from tests.tui.conftest import burst, fill, settle
from tests.tui.fixture_store import TODAY
from tests.tui.test_quick_log_safety import open_record, press_and_settle


def shown(app, selector: str) -> str:
    return app.screen.query_one(selector).render().plain


def patient_rows(ctx) -> tuple[int, int]:
    return len(ctx.store.patients.all()), ctx.store.audit.count()


async def test_a_clerk_registers_a_caller_typed_ahead(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        # The fixture's highest id is P0005: P0006 is proposed and taken without a key.
        await press_and_settle(pilot, "n", *"Jane  Roe", "enter", *"1990-04-02", "enter", *"nora", "enter")
        assert not isinstance(app.screen, RegisterDialog)
        assert "P0006" in app.screen.query_one(CaseloadTable).patient_ids
    patient = check.store.patients.get("P0006")
    assert (patient.name, patient.born.isoformat(), patient.nurse_id) == ("Jane Roe", "1990-04-02", "nora")
    assert patient.plan is Plan.NATURAL and patient.status is PatientStatus.ACTIVE
    added = check.store.audit.rows("patient.add")[-1]
    assert (added.by_staff, added.row_id) == ("phil", "P0006")


async def test_a_caller_with_no_nurse_yet_is_registered_unassigned(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("n", *"Ines Alves", "enter", *"1988-11-30", "enter")
        await settle(pilot)
        assert "no nurse yet" in shown(app, "#check")
        await press_and_settle(pilot, "enter")
    assert check.store.patients.get("P0006").nurse_id is None


async def test_registration_refuses_a_bad_birth_date_in_one_line_and_writes_nothing(app_as, service_ctx):
    check = service_ctx("ada")
    before = patient_rows(check)
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await press_and_settle(pilot, "n", *"Jane Roe", "enter", *"1990-13-01", "enter", "enter")
        assert isinstance(app.screen, RegisterDialog)
        # The CLI's words (core/parse.py parse_birth_date), on one line.
        assert shown(app, "#check") == "Not yet: date of birth '1990-13-01' not understood: use YYYY-MM-DD"
        assert app.focused.id == "born"
        await fill(pilot, "2027-01-01")  # after the clinic's day: not plausible
        assert "is not plausible: it must be before today" in shown(app, "#check")
        await fill(pilot, "2026-11-30")  # the day before the clinic's day: a baby, not a caller
        assert shown(app, "#check") == ("Not yet: date of birth 2026-11-30 is not plausible: it gives age 0 on"
                                         " 2026-12-01, and a patient must be 12 to 60")
        await press_and_settle(pilot, "enter")
        assert isinstance(app.screen, RegisterDialog) and app.focused.id == "born"
    assert patient_rows(check) == before


async def test_registration_refuses_an_id_taken_in_another_letter_case(app_as, service_ctx):
    check = service_ctx("ada")
    before = patient_rows(check)
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await press_and_settle(pilot, "n", *"Jane Roe", "enter", *"1990-04-02", "enter", "tab")
        await fill(pilot, "p0001")
        await press_and_settle(pilot, "enter")
        assert isinstance(app.screen, RegisterDialog)
        assert shown(app, "#check") == ("Not registered: patient id p0001 is taken as P0001: ids are unique whatever"
                                         " their letter case; choose another")
        assert app.screen.query_one("#patient-id", Input).value == "p0001"  # left as typed, to be changed
    assert patient_rows(check) == before


async def test_registration_refuses_a_taken_id_and_an_unknown_nurse(app_as, service_ctx):
    check = service_ctx("ada")
    before = patient_rows(check)
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await press_and_settle(pilot, "n", *"Jane Roe", "enter", *"1990-04-02", "enter", *"zed")
        assert shown(app, "#check").startswith("Not yet: no active nurse 'zed': type one of nell, nora")
        await fill(pilot, "")
        await press_and_settle(pilot, "tab")
        await fill(pilot, "P0001")
        await press_and_settle(pilot, "enter")
        assert isinstance(app.screen, RegisterDialog)
        assert shown(app, "#check") == "Not registered: patient id P0001 is taken: choose another"
        await burst(pilot, "enter", *"P0077")  # Enter again with the next id typed straight on
        assert shown(app, "#check") == ("Not registered: patient id P0001 is taken: choose another\n"
                                         "Typed after Enter and not used: 'P0077'. Type it again once you have read the above.")
        assert app.screen.query_one("#patient-id", Input).value == "P0001"
    assert patient_rows(check) == before


async def test_a_nurse_changes_nurse_plan_and_status_from_the_record(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_record(app, pilot, "P0001")
        await press_and_settle(pilot, "c", *"nora", "tab", *"ovu", "tab", *"pa", "enter")
        assert isinstance(app.screen, RecordScreen)
    patient = check.store.patients.get("P0001")
    assert (patient.nurse_id, patient.plan, patient.status) == ("nora", Plan.OVULATION_INDUCTION, PatientStatus.PAUSED)
    changed = check.store.audit.rows("patient.update")[-1]
    assert (changed.by_staff, changed.row_id) == ("nell", "P0001")


async def test_an_enter_that_finds_another_field_wrong_names_the_keys_it_sets_aside(app_as, service_ctx):
    check = service_ctx("ada")
    before = patient_rows(check)
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await burst(pilot, "n", "shift+tab", "enter", *"Jo")  # from the name, back to the id: Enter there
        assert app.focused.id == "name"  # the field that needs filling in
        assert shown(app, "#check").endswith("\nTyped after Enter and not used: 'Jo'. Type it again once you "
                                              "have read the above.")
        assert app.focused.value == ""
    assert patient_rows(check) == before


async def test_an_enter_with_nothing_changed_leaves_the_keys_after_it_to_the_field(app_as, service_ctx):
    """Enter on an unchanged care form does nothing, so what is typed after it is typed on there."""
    check = service_ctx("ada")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_record(app, pilot, "P0001")
        await burst(pilot, "c", "enter", *"nora", "enter")
        assert isinstance(app.screen, RecordScreen)
    assert check.store.patients.get("P0001").nurse_id == "nora"


async def test_a_refused_plan_shows_one_line_and_writes_nothing(app_as, service_ctx):
    check = service_ctx("ada")
    before = patient_rows(check)
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_record(app, pilot, "P0002")
        await press_and_settle(pilot, "c", "tab", *"ivf", "enter")
        assert isinstance(app.screen, PatientDialog)
        assert shown(app, "#check") == (
            "Not yet: plan 'ivf' not accepted: use one of natural, timed, ovulation-induction, insemination")
    assert patient_rows(check) == before
    assert check.store.patients.get("P0002").plan is Plan.TIMED


async def test_a_nurse_takes_the_nurse_off_a_patient(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_record(app, pilot, "P0002")
        await press_and_settle(pilot, "c", "backspace", "enter")
    assert check.store.patients.get("P0002").nurse_id is None


async def test_phone_staff_are_not_offered_the_change_and_the_clinic_refuses_it(app_as, service_ctx):
    check = service_ctx("ada")
    before = patient_rows(check)
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_record(app, pilot, "P0001")
        await press_and_settle(pilot, "c")
        assert isinstance(app.screen, RecordScreen)
        assert app.screen.check_action("care", ()) is False  # not in the footer either
        # Pushed past the hidden key, the dialog's save is still refused by the use case.
        app.push_screen(PatientDialog(check.store.patients.get("P0001")))
        await settle(pilot)
        await press_and_settle(pilot, *"nora", "enter")
        assert shown(app, "#check") == (
            "Not saved: phone staff may not change a patient's plan, status or nurse: it needs nurse or supervisor or admin")
    assert patient_rows(check) == before


async def test_a_burst_after_c_goes_into_the_form_not_the_record_behind(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_record(app, pilot, "P0001")
        await burst(pilot, *"cnora", "tab", *"tim", "enter")
        assert isinstance(app.screen, RecordScreen)
    patient = check.store.patients.get("P0001")
    assert (patient.nurse_id, patient.plan) == ("nora", Plan.TIMED)


async def test_a_burst_after_n_goes_into_the_form_and_n_stays_text_in_the_search(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        # `a`, typed on after the form, opens the alert queue
        await burst(pilot, *"nAnn Lee", "enter", *"1979-02-28", "enter", "enter", "a")
        assert check.store.patients.get("P0006").name == "Ann Lee"
        assert isinstance(app.screen, AlertQueueScreen)
        await pilot.press("escape")
        await pilot.press("slash")
        await settle(pilot)
        await burst(pilot, *"nora")
        assert not isinstance(app.screen, RegisterDialog) and app.focused.value == "nora"


async def test_a_call_typed_straight_after_registering_is_logged_for_the_new_patient(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("down", "down")  # another patient highlighted before `n`
        highlighted = app.screen.patient_id
        await burst(pilot, *"nAda Lee", "enter", *"1990-01-01", "enter", "enter",
                    "l", "enter", "b", "enter", *"light", "enter")
    assert [(e.kind, e.value.word) for e in patient_entries(check, "P0006")] == [(Kind.BLEED, "light")]
    assert [e for e in patient_entries(check, highlighted) if e.by == "phil" and e.kind is Kind.BLEED
            and e.value.word == "light" and e.day == TODAY] == []


async def test_keys_typed_after_registering_a_patient_the_filters_hide_are_named_not_used(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await burst(pilot, "u")  # the unassigned patients only: Ada is registered with a nurse
        await burst(pilot, *"nAda Lee", "enter", *"1990-01-01", "enter", *"nora", "enter", "l", "enter")
        assert not isinstance(app.screen, QuickLogScreen)
        said = [n.message for n in app._notifications]
        assert any(m.startswith("P0006 is not in the list as filtered. Typed after Enter and not used: 'l⏎'.")
                   for m in said)
    assert patient_entries(check, "P0006") == []


async def test_an_enter_typed_before_the_nurses_are_read_waits_for_them(app_as, service_ctx, monkeypatch):
    """A slow store: the saving Enter and the key after it arrive before the nurses do; neither is lost."""
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        read = app.clinic.staff_list
        monkeypatch.setattr(app.clinic, "staff_list", lambda: time.sleep(0.5) or read())
        await burst(pilot, *"nAnn Lee", "enter", *"1979-02-28", "enter", "enter", "a")
        await pilot.pause(0.8)
        await settle(pilot)
        assert check.store.patients.get("P0006").name == "Ann Lee"
        assert isinstance(app.screen, AlertQueueScreen)
