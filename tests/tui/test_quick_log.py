"""The phone line's quick log: find a patient, log, see the result; refusals write nothing."""

from __future__ import annotations

import time

import pytest
from textual import events
from textual.widgets import Input, OptionList

from caseload.core.model import Kind
from caseload.application.entries import patient_entries, void_entry
from caseload.tui.screens.correct_entry import QUIET_SECONDS, CorrectEntryDialog
from caseload.tui.screens.quick_log import QuickLogScreen
from caseload.tui.screens.record import RecordScreen
from tests.tui.conftest import burst, fill, settle
from tests.tui.fixture_store import TODAY
from tests.tui.test_quick_log_safety import open_record, shown, today_of


def counts(ctx) -> tuple[int, int]:
    return ctx.store.entries.count(), ctx.store.audit.count()


def temps_today(ctx, patient_id: str):
    return [e for e in patient_entries(ctx, patient_id) if e.kind is Kind.TEMP and e.day == TODAY]


async def test_phone_clerk_logs_a_temperature_by_name(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        # The exact keystrokes of a call: l, part of the name, Enter, t, Enter, the reading, Enter.
        await pilot.press("l", *"noor", "enter", "t", "enter", *"36.55", "enter")
        await settle(pilot)
        screen = app.screen
        assert isinstance(screen, QuickLogScreen)
        result = screen.query_one("#result").render().plain
        assert result.startswith("Saved #") and "P0004: temp 36.55" in result and "Cycle day 20" in result
        [entry] = temps_today(check, "P0004")
        assert entry.value.number == 36.55 and entry.by == "phil"
        await pilot.press("escape")
        await settle(pilot)
        table = app.screen.query_one("#caseload")
        assert table.get_cell("P0004", "last").plain.strip() == "0d"  # was 5d before the call
        table.move_cursor(row=table.get_row_index("P0004"))
        await pilot.press("enter")
        await settle(pilot)
        assert isinstance(app.screen, RecordScreen)
        assert (20, 36.55) in app.screen.query_one("CycleChart")._view.temps


async def test_a_bleed_after_the_temperature_in_the_same_call(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("l", "ctrl+u", *"P0004", "enter", "t", "enter", *"98.1F", "enter")
        await settle(pilot)
        await pilot.press("b", "enter", *"heavy", "tab")
        await fill(pilot, "yesterday")
        await pilot.press("enter")
        await settle(pilot)
        result = app.screen.query_one("#result").render().plain
        assert "bleed heavy on 2026-11-30" in result and "Cycle day 2 (menses)" in result
        bleeds = [e for e in patient_entries(check, "P0004") if e.kind is Kind.BLEED and e.current]
        assert bleeds[-1].day.isoformat() == "2026-11-30"
        # 98.1 F is (98.1 - 32) x 5/9 = 36.72 C (NIST SP 811 conversion).
        assert temps_today(check, "P0004")[0].value.number == 36.72


async def test_a_refused_value_shows_why_and_writes_nothing(app_as, service_ctx):
    check = service_ctx("ada")
    before = counts(check)
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("l", *"noor", "enter", "t", "enter", *"98.1")
        await pilot.pause()
        line = app.screen.query_one("#check").render().plain
        assert "looks like Fahrenheit: write 98.1F" in line
        await pilot.press("enter")
        await settle(pilot)
        assert app.screen.query_one("#result").render().plain == ""
        await pilot.press("ctrl+u", *"36.5", "tab")
        await fill(pilot, "tomorrow")
        await pilot.press("enter")
        await settle(pilot)
        assert "not understood" in app.screen.query_one("#check").render().plain
    assert counts(check) == before


async def test_second_temperature_offers_a_correction_to_a_nurse(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("l", *"pia", "enter", "t", "enter", *"36.91", "enter")
        await settle(pilot)
        assert isinstance(app.screen, CorrectEntryDialog)
        await pilot.pause(QUIET_SECONDS * 2)  # the question takes keys once the typing has paused
        await fill(pilot, "read from the wrong day")
        await pilot.press("enter")
        await settle(pilot)
        assert "Saved #" in app.screen.query_one("#result").render().plain
    current = [e for e in temps_today(check, "P0001") if e.current]
    assert [e.value.number for e in current] == [36.91]
    assert current[0].amend_reason == "read from the wrong day"


async def test_second_temperature_is_not_replaced_by_phone_staff(app_as, service_ctx):
    check = service_ctx("ada")
    before = counts(check)
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("l", *"pia", "enter", "t", "enter", *"36.91", "enter")
        await settle(pilot)
        assert isinstance(app.screen, QuickLogScreen)
        assert "a nurse can replace it" in app.screen.query_one("#result").render().plain
    assert counts(check) == before


async def test_keys_typed_after_a_refused_reading_are_named_not_lost_without_a_word(app_as, service_ctx):
    """The clerk types the next entry of the call straight on ("b⏎spotting⏎"); the reading is refused
    (one already that day), so that entry is not logged either, and the screen says what was not used."""
    check = service_ctx("ada")
    before = counts(check)
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await burst(pilot, "l", *"pia", "enter", "t", "enter", *"36.91", "enter", "b", "enter", *"spotting", "enter")
        await settle(pilot)
        said = app.screen.query_one("#result").render().plain
        assert "a nurse can replace it" in said
        assert said.endswith("Typed after Enter and not used: 'b⏎spotting⏎'. Type it again once you have read the above.")
        assert app.screen.query_one("#kind", Input).value == "temp"  # the refused reading is still there to read
    assert counts(check) == before


async def test_quick_log_from_a_record_has_the_patient_picked(app_as):
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        app.push_screen(RecordScreen("P0002"))
        await settle(pilot)
        await pilot.press("l")
        await pilot.pause()
        assert app.screen.query_one("PatientPicker").patient.id == "P0002"
        assert app.focused.id == "kind"


async def test_keys_arriving_in_one_burst_land_in_their_fields(app_as, service_ctx):
    """Over SSH a fast typist's keys can arrive together: none may end up in the field just left."""
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        burst = ["l", *"noor", "enter", "t", "enter", *"36.55", "enter", "b", "enter", *"light", "enter"]
        for key in burst:
            app.post_message(events.Key(key, "\r" if key == "enter" else key))
        await settle(pilot, rounds=5)
        kinds = sorted(e.kind.value for e in patient_entries(check, "P0004") if e.day == TODAY)
        assert kinds == ["bleed", "temp"]
        assert temps_today(check, "P0004")[0].value.number == 36.55
        assert app.screen.query_one("#kind").value == ""


async def test_a_save_updates_its_row_from_the_returned_snapshot_without_reading_the_list(app_as):
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        reads = []
        list_once = app.clinic.morning_list
        app.clinic.morning_list = lambda: reads.append(1) or list_once()
        await pilot.press("l", *"noor", "enter", "b", "enter", *"heavy", "enter")
        await settle(pilot)
        assert reads == []  # the save's own snapshot rebuilt the row
        (row,) = [line for line in app.roster if line.patient.id == "P0004"]
        # A heavy bleed logged today starts a new cycle: today is cycle day 1 (day 1 = first day of flow).
        assert row.cycle_day == 1 and row.days_since_entry == 0
        assert row.snapshot.computed_on == TODAY


NONE_CHOSEN = "Log a call: no patient chosen yet"


def highlighted_match(app) -> str:
    matches = app.screen.query_one("#matches", OptionList)
    return matches.get_option_at_index(matches.highlighted).id


async def test_the_title_names_a_patient_only_once_she_is_picked(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        offered = app.screen.patient_id  # the list's highlighted patient starts in the field
        await burst(pilot, "l")
        assert offered in app.screen.query_one("#patient").value
        assert shown(app, "#whose") == NONE_CHOSEN
        await burst(pilot, *"noo")  # a new name, typed in one burst: Noor is the first match, not yet chosen
        assert highlighted_match(app) == "P0004"
        assert shown(app, "#whose") == NONE_CHOSEN
        await burst(pilot, "r", "enter", "t", "enter", *"36.62", "enter")
        assert shown(app, "#whose") == "Log a call for P0004 Noor Haddad"
    assert [e.value.number for e in today_of(check, "P0004", Kind.TEMP)] == [36.62]


async def test_the_offered_patient_is_named_once_enter_picks_her(app_as):
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        offered = app.screen.patient_id
        await burst(pilot, "l", "enter")
        name = app.screen.query_one("PatientPicker").patient.name
        assert shown(app, "#whose") == f"Log a call for {offered} {name}"
        assert app.focused.id == "kind"


async def test_nothing_is_logged_for_an_offered_patient_left_unpicked(app_as, service_ctx):
    check = service_ctx("ada")
    before = check.store.entries.count(), check.store.audit.count()
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await burst(pilot, "l", "tab", "t", "enter", *"36.62", "enter")  # Tab past the offered patient without Enter
        assert shown(app, "#whose") == NONE_CHOSEN
        assert shown(app, "#result") == "Pick a patient first: type an id or a name, then Enter."
        assert app.focused.id == "patient"
    assert (check.store.entries.count(), check.store.audit.count()) == before


async def test_a_log_from_a_record_names_her_until_another_is_typed(app_as):
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_record(app, pilot, "P0004")
        await burst(pilot, "l")
        assert shown(app, "#whose") == "Log a call for P0004 Noor Haddad (ctrl+o: other patient)"
        await pilot.press("ctrl+o")
        await burst(pilot, *"ros")
        assert highlighted_match(app) == "P0002"
        assert shown(app, "#whose") == NONE_CHOSEN


@pytest.mark.parametrize("downs, reading", [(0, "36.5"), (1, "36.62"), (2, "36.5"), (3, "36.48")])
async def test_a_log_typed_straight_after_enter_on_the_list_is_for_the_record_it_opened(app_as, service_ctx,
                                                                                       downs, reading):
    check = service_ctx("ada")
    for entry in (e for pid in ("P0001", "P0002", "P0003", "P0004") for e in temps_today(check, pid) if e.current):
        void_entry(check, entry.id, "read on the wrong day")  # a clean day: no correction asked
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        ids = app.screen.query_one("#caseload").patient_ids
        before = {pid: temps_today(check, pid) for pid in ids}
        await burst(pilot, *["down"] * downs, "enter", "l", "t", "enter", *reading, "enter")
        await settle(pilot)
    expected = ids[downs]
    [entry] = [e for e in temps_today(check, expected)[len(before[expected]):] if e.current]
    assert entry.value.number == float(reading)
    assert {pid: temps_today(check, pid) for pid in ids if pid != expected} == {
        pid: temps for pid, temps in before.items() if pid != expected}  # nobody else got a reading


async def test_a_call_typed_before_the_caseload_is_read_waits_for_it(app_as, service_ctx, monkeypatch):
    """A slow store at start-up: `l`, a name and Enter arrive before the list; the Enter picks her
    once it is read, and the keys behind it go on into the call."""
    check = service_ctx("ada")
    app = app_as("phil")
    read = app.clinic.caseload_read
    monkeypatch.setattr(app.clinic, "caseload_read", lambda: time.sleep(0.5) or read())
    async with app.run_test(size=(80, 24)) as pilot:
        await burst(pilot, "l", *"noor", "enter", "b", "enter", *"light", "enter")
        await pilot.pause(0.8)
        await settle(pilot)
        assert shown(app, "#result").startswith("Saved #")
    assert [e.value.word for e in today_of(check, "P0004", Kind.BLEED)] == ["light"]


async def test_an_enter_with_no_patient_matching_names_the_keys_it_sets_aside(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await burst(pilot, "l", *"zz9", "enter", "t", "enter", *"36.5", "enter")
        assert app.screen.query_one("#patient", Input).value == "zz9"
        assert shown(app, "#result") == ("No patient matches 'zz9': type an id or a name, then Enter.\n"
                                         "Typed after Enter and not used: 't⏎36.5⏎'. Type it again once you have "
                                         "read the above.")
        assert shown(app, "#check") == "Next: the patient (an id or a name), then Enter"
        # The line speaks of what was typed then: typing on clears it.
        await burst(pilot, "backspace", "backspace", "backspace", *"noor")
        assert shown(app, "#result") == ""
    assert [e for e in patient_entries(check, "P0004") if e.day == TODAY and e.by == "phil"] == []


async def test_enter_typed_while_the_program_starts_arrives_as_a_newline_and_counts_as_enter(app_as, service_ctx):
    # A terminal still in line mode turns Enter into a newline (the tty's ICRNL): keys typed before
    # the interface has taken the terminal arrive so, as ctrl+j.
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        for key in ["l", *"noor", "ctrl+j", "b", "ctrl+j", *"light", "ctrl+j"]:
            app.post_message(events.Key(key, "\n" if key == "ctrl+j" else key))
        await settle(pilot, rounds=5)
        assert shown(app, "#result").startswith("Saved #")
    assert [e.value.word for e in today_of(check, "P0004", Kind.BLEED)] == ["light"]
