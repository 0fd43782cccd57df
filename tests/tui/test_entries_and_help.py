"""The record's entries: who logged each and when it was recorded, one entry in full, a note added;
and the help screen on `?`, built from the keys that work where it is opened."""

from __future__ import annotations

from zoneinfo import ZoneInfo

from caseload.core.model import Kind
from caseload.application.entries import patient_entries
from caseload.tui.key_help import SENTENCES
from caseload.tui.screens.correct_entry import CorrectEntryDialog
from caseload.tui.screens.entry_detail import EntryDialog
from caseload.tui.screens.help import HelpScreen
from caseload.tui.screens.quick_log import QuickLogScreen
from caseload.tui.screens.record import RecordScreen
from caseload.tui.widgets.entries_table import EntriesTable
from tests.tui.conftest import burst, settle
from tests.tui.fixture_store import TODAY
from tests.tui.test_bindings import interface_classes
from tests.tui.test_quick_log_safety import open_record

LONG_NOTE = ("Called back at lunch: taking the new tablets with food since Monday, sleeping badly, "
             "partner away until the 14th so no insemination this cycle; will ring if the bleed starts early. "
             "Asked for the clinic's leaflet on timed intercourse to be posted.")


def shown(app, selector: str) -> str:
    return app.screen.query_one(selector).render().plain


def help_listed(app) -> str:
    """The help's lines as one text: each key, its words and its sentence."""
    return " ".join(w.render().plain for w in app.screen.query("#help-keys Label, #help-keys Static"))


async def test_entries_say_who_logged_them_and_when_they_were_recorded(app_as, service_ctx):
    check = service_ctx("ada")
    corrected = next(e for e in patient_entries(check, "P0002") if e.amend_reason)
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_record(app, pilot, "P0002")
        await pilot.press("5")
        table = app.screen.query_one(EntriesTable)
        # Recorded-at is the store's UTC time shown in the clinic's zone (the fixture's Europe/London,
        # from the IANA tz database): not the day of the reading, which here is yesterday.
        local = corrected.at.astimezone(ZoneInfo("Europe/London"))
        assert table.get_cell(str(corrected.id), "Logged").plain == f"{local.day} {local:%b %H:%M}"
        assert table.get_cell(str(corrected.id), "By").plain == "nell"
        table.move_cursor(row=table.get_row_index(str(corrected.id)))
        await pilot.press("enter")
        await settle(pilot)
        assert isinstance(app.screen, EntryDialog)
        text = shown(app, "#entry-text")
        assert "Logged by: nell" in text and f"Recorded: {local.day} {local:%b %H:%M} (Europe/London)" in text
        assert "Why corrected: reading phoned in again" in text and "Value: 38.3 C" in text
        await pilot.press("escape")
        await settle(pilot)
        assert isinstance(app.screen, RecordScreen)


async def test_a_note_is_added_typed_ahead_and_read_in_full(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")  # phone staff log entries, notes among them
    async with app.run_test(size=(80, 24)) as pilot:
        await open_record(app, pilot, "P0004")
        await burst(pilot, "n", *LONG_NOTE, "enter")  # typed ahead: the dialog takes every key
        assert isinstance(app.screen, RecordScreen)
        notes = [e for e in patient_entries(check, "P0004") if e.kind is Kind.NOTE]
        assert [(n.value.text, n.by, n.day) for n in notes] == [(LONG_NOTE, "phil", TODAY)]
        await pilot.press("5")
        table = app.screen.query_one(EntriesTable)
        table.move_cursor(row=table.get_row_index(str(notes[0].id)))
        await pilot.press("enter")
        await settle(pilot)
        text = " ".join(shown(app, "#entry-text").split())  # wrapped over lines, never cut
        assert f"Note: {LONG_NOTE}" in text


async def test_an_empty_note_is_refused_in_one_line_and_writes_nothing(app_as, service_ctx):
    check = service_ctx("ada")
    before = check.store.entries.count()
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_record(app, pilot, "P0001")
        await pilot.press("n", *"   ", "enter")
        await settle(pilot)
        assert shown(app, "#check") == "note needs a short text (what was taken, done or noticed)"
    assert check.store.entries.count() == before


def test_every_key_has_a_sentence():
    ids = {b.id for cls in interface_classes() for b in cls.__dict__.get("BINDINGS", [])}
    assert ids - set(SENTENCES) == set()


async def test_help_lists_the_keys_of_the_screen_it_is_opened_on(app_as):
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("?")
        await settle(pilot)
        assert isinstance(app.screen, HelpScreen)
        listed = help_listed(app)
        assert SENTENCES["caseload.register"] in listed
        assert "Export" not in listed  # phone staff cannot export: the key is not offered, nor listed
        await pilot.press("escape")
        await settle(pilot)
        await open_record(app, pilot, "P0004")
        await pilot.press("5", "?")
        await settle(pilot)
        listed = help_listed(app)
        assert "Add note" in listed and "Details" in listed and "New caller" not in listed
        assert "Amend" not in listed  # phone staff do not correct entries
        assert "record" in shown(app, ".dialog-title")


async def test_help_opens_in_a_dialog_with_f1_and_question_mark_stays_text(app_as):
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("l", *"pia", "enter", "?", "f1")
        await settle(pilot)
        assert isinstance(app.screen, HelpScreen)
        listed = help_listed(app)
        assert SENTENCES["quick_log.save"] in listed and "Log a call" in shown(app, ".dialog-title")
        await pilot.press("escape")
        await settle(pilot)
        assert isinstance(app.screen, QuickLogScreen) and app.focused.value == "?"


async def test_a_note_typed_in_one_burst_lands_in_the_note_and_the_next_key_on_the_record(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_record(app, pilot, "P0003")
        await burst(pilot, *"nrang back, no answer", "enter", "5")  # and on to the entries, without a pause
        assert app.screen.query_one("TabbedContent").active == "entries"
    notes = [e.value.text for e in patient_entries(check, "P0003") if e.kind is Kind.NOTE]
    assert notes == ["rang back, no answer"]


async def entries_at(app, pilot, patient_id: str, entry_id: int) -> EntriesTable:
    """The record's entries tab with `entry_id` highlighted."""
    await open_record(app, pilot, patient_id)
    await pilot.press("5")
    table = app.screen.query_one(EntriesTable)
    table.move_cursor(row=table.get_row_index(str(entry_id)))
    await pilot.pause()
    return table


def record_untouched(app, check, patient_id: str) -> None:
    """Nothing typed for the dialog reached the record: its digits would change the tab, its `n`
    and `c` open other dialogs, and nothing else is written for the patient."""
    assert isinstance(app.screen, RecordScreen)
    assert app.screen.query_one("TabbedContent").active == "entries"
    assert [e for e in patient_entries(check, patient_id) if e.kind is Kind.NOTE] == []


def newest_version(check, patient_id: str, entry_id: int):
    """The entry that replaced `entry_id` (an amend writes a new entry and keeps the old one)."""
    return next(e for e in patient_entries(check, patient_id) if e.supersedes == entry_id)


async def test_an_amend_typed_in_one_burst_saves_its_value_and_reason_to_that_entry(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await entries_at(app, pilot, "P0001", 154)  # not the newest: the highlighted one is corrected
        await burst(pilot, *"a36.72", "tab", *"cannot read the second digit", "enter")
        record_untouched(app, check, "P0001")
    new = newest_version(check, "P0001", 154)
    assert (new.value.number, new.amend_reason, new.by) == (36.72, "cannot read the second digit", "nell")
    assert not check.store.entries.get(154).current
    assert check.store.entries.get(155).current and check.store.entries.get(155).value.number == 36.84


async def test_an_amend_moved_on_with_enter_and_the_key_after_it_go_where_meant(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await entries_at(app, pilot, "P0003", 278)
        # Enter after the value moves to the reason; the `4` after the saving Enter is the record's.
        await burst(pilot, *"aheavy", "enter", *"phoned again: heavier than said", "enter", "4")
        assert isinstance(app.screen, RecordScreen)
        assert app.screen.query_one("TabbedContent").active == "alerts"
    new = newest_version(check, "P0003", 278)
    assert (new.value.word, new.amend_reason) == ("heavy", "phoned again: heavier than said")


async def test_a_void_typed_in_one_burst_saves_its_reason_to_that_entry(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        table = await entries_at(app, pilot, "P0004", 298)
        await burst(pilot, *"vlogged for the wrong patient, 2nd call", "enter")
        record_untouched(app, check, "P0004")
        assert table.get_cell("298", "Status").plain == "void: logged for the wrong patient, 2nd call"
    assert check.store.entries.get(298).voided_reason == "logged for the wrong patient, 2nd call"
    assert check.store.entries.get(299).current and check.store.entries.get(297).current


async def test_a_bad_amend_typed_in_one_burst_stays_in_the_dialog_and_writes_nothing(app_as, service_ctx):
    check = service_ctx("ada")
    before = check.store.entries.count(), check.store.audit.count()
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await entries_at(app, pilot, "P0001", 155)
        # The keys after a refused Enter stay in its field.
        await burst(pilot, *"a3x.7", "tab", *"misread", "enter", *"5n")
        assert isinstance(app.screen, CorrectEntryDialog)
        typed = (app.screen.query_one("#value").value, app.screen.query_one("#reason").value)
        assert typed == ("3x.7", "misread5n")
        assert "not understood" in shown(app, "#check")
    assert (check.store.entries.count(), check.store.audit.count()) == before
