"""The alert queue and a record's alerts driven by keys as staff type them, typed ahead included:
tabs that answer, a cursor that never rests on a heading, columns that stay put, the snooze
dialog in screen order, the history of resolved alerts, evidence in sentences, and what phone
staff see and may do."""

from __future__ import annotations

import time
from datetime import timedelta

import pytest

from caseload.application.alert_handling import list_alerts, resolve
from caseload.core.model import AlertState
from caseload.tui.screens.alert_queue import AlertQueueScreen
from caseload.tui.screens.note_dialog import NoteDialog
from caseload.tui.screens.record import RecordScreen
from caseload.tui.widgets.alert_list import GROUP, AlertTable
from tests.tui.conftest import burst, settle
from tests.tui.test_alerts_and_roles import alert_of, highlight
from tests.tui.fixture_store import TODAY

FEVER_WORDS = "38.30 °C on 30 Nov, at or above the fever threshold of 38.00 °C."  # 38.0 C: common practice


async def open_queue(pilot):
    await settle(pilot)
    await pilot.press("a")
    await settle(pilot)
    assert isinstance(pilot.app.screen, AlertQueueScreen)
    return pilot.app.screen.query_one(AlertTable)


async def queue_at(pilot, alert_id: int) -> AlertTable:
    """The alert queue open with the cursor on one alert."""
    await open_queue(pilot)
    return await highlight(pilot, alert_id)


def shown_keys(app) -> set[str]:
    return {b.binding.description for b in app.active_bindings.values() if b.binding.show and b.enabled}


def notes(app) -> list[str]:
    return [n.message for n in app._notifications]


async def test_a_tab_typed_straight_after_enter_is_kept_and_1_leaves_the_alerts_tab(app_as, service_ctx):
    fever = alert_of(service_ctx("ada"), "fever")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await queue_at(pilot, fever.id)
        await burst(pilot, "enter", "2")  # open the record and go to its cycles, in one burst
        await settle(pilot)
        await pilot.pause(1.5)  # a second later it is still where she chose
        record = app.screen
        assert isinstance(record, RecordScreen) and record.patient_id == "P0002"
        assert record.query_one("TabbedContent").active == "cycles"
        await pilot.press("4", "1")
        await settle(pilot)
        assert record.query_one("TabbedContent").active == "chart"
        await pilot.press("4", "3")
        await settle(pilot)
        assert record.query_one("TabbedContent").active == "outlook"


async def test_opened_from_the_queue_the_record_shows_the_alert_and_its_evidence_in_words(app_as, service_ctx):
    fever = alert_of(service_ctx("ada"), "fever")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await queue_at(pilot, fever.id)
        evidence = app.screen.query_one("#evidence").render().plain
        assert FEVER_WORDS in evidence and "celsius" not in evidence and "{" not in evidence
        await pilot.press("enter")
        await settle(pilot)
        record = app.screen
        assert record.query_one("TabbedContent").active == "alerts"
        assert record.query_one(AlertTable).current_alert().id == fever.id
        assert app.focused is record.query_one(AlertTable)
        assert FEVER_WORDS in record.query_one("#evidence").render().plain


async def test_the_cursor_steps_over_headings_and_every_row_it_rests_on_is_an_alert(app_as):
    app = app_as("ada")
    async with app.run_test(size=(120, 40)) as pilot:
        table = await open_queue(pilot)
        headings = [r.value for r in table.rows if r.value.startswith(GROUP)]
        assert len(headings) >= 2  # more than one severity in the fixture
        visited = []
        for key in ["up", *["down"] * table.row_count, *["up"] * table.row_count]:
            await pilot.press(key)
            visited.append(table.current_alert())
        assert None not in visited
        assert table.cursor_row == 1  # back at the top, below the first heading
        await pilot.press("down", "down", "r")  # typed ahead: a resolve on an alert, never on a heading
        await pilot.pause()
        assert isinstance(app.screen, NoteDialog) and app.screen.alert.id == table.current_alert().id


async def test_columns_keep_their_widths_after_acknowledging(app_as, service_ctx):
    check = service_ctx("ada")
    window = alert_of(check, "window-open")
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        table = await open_queue(pilot)
        widths = {key.value: col.get_render_width(table) for key, col in table.columns.items()}
        await highlight(pilot, window.id)
        await pilot.press("a", *"will call today", "enter")
        await settle(pilot)
        assert window.id not in [int(r.value) for r in table.rows if not r.value.startswith(GROUP)]
        assert {key.value: col.get_render_width(table) for key, col in table.columns.items()} == widths
        assert widths["Alert"] >= len("bleed in pregnancy") and widths["Patient"] >= 20
    stored = check.store.alerts.get(window.id)
    assert (stored.state, stored.note) == (AlertState.ACKNOWLEDGED, "will call today")


async def test_focus_shows_on_the_alert_list_and_moves_visibly_to_the_evidence(app_as):
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        table = await open_queue(pilot)
        scroll = app.screen.query_one("#evidence-scroll")
        focused_header, blurred_rule = table.get_component_rich_style("datatable--header"), scroll.styles.border_top
        await pilot.press("tab")
        assert app.focused is scroll and scroll.styles.border_top != blurred_rule
        assert table.get_component_rich_style("datatable--header") != focused_header
        await pilot.press("shift+tab")
        assert app.focused is table and table.get_component_rich_style("datatable--header") == focused_header


@pytest.mark.parametrize("keys, at_once, days, note", [
    (("z", *"+3", "tab", *"call on the day", "enter"), False, 3, "call on the day"),
    (("z", "enter", *"back Friday", "enter"), False, 1, "back Friday"),  # Enter keeps "tomorrow", then the note
    (("z", *"+3", "enter", *"ring monday", "enter"), True, 3, "ring monday"),  # in one burst
])
async def test_snooze_asks_until_when_first_then_the_note(app_as, service_ctx, keys, at_once, days, note):
    check = service_ctx("ada")
    window = alert_of(check, "window-approaching")
    app = app_as("nora")
    async with app.run_test(size=(80, 24)) as pilot:
        await queue_at(pilot, window.id)
        if not at_once:
            await pilot.press("z")
            assert isinstance(app.screen, NoteDialog) and app.focused is app.screen.query_one("#until")
            await pilot.press("escape")
        await (burst(pilot, *keys) if at_once else pilot.press(*keys))
        await settle(pilot)
        assert isinstance(app.screen, AlertQueueScreen)
    stored = check.store.alerts.get(window.id)
    assert stored.state is AlertState.SNOOZED and stored.snooze_until == TODAY + timedelta(days=days)
    assert stored.note == note


async def test_a_record_lists_its_resolved_alerts_with_who_handled_them_and_how(app_as, service_ctx):
    check = service_ctx("ada")
    fever = alert_of(check, "fever")
    resolve(check, fever.id, "flu, reading flagged as illness")
    app = app_as("nell")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        app.push_screen(RecordScreen("P0002"))
        await settle(pilot)
        await pilot.press("4", "down", "down", "down")
        await settle(pilot)
        table = app.screen.query_one(AlertTable)
        assert "group:resolved" in [r.value for r in table.rows]
        assert table.current_alert().id == fever.id
        assert table.get_cell(str(fever.id), "State").plain == "resolved"
        evidence = app.screen.query_one("#evidence").render().plain
        assert "What was done:" in evidence
        assert "resolved by ada: flu, reading flagged as illness" in evidence
        assert not {"Acknowledge", "Snooze", "Resolve"} & shown_keys(app)
        await pilot.press("r")  # nothing left to do: one line says so
        await pilot.pause()
        assert not isinstance(app.screen, NoteDialog)
        assert f"Alert #{fever.id} is resolved: nothing left to resolve." in notes(app)


async def test_a_phone_clerk_sees_what_to_tell_the_caller_and_no_clinical_keys(app_as, service_ctx):
    check = service_ctx("ada")
    fever = alert_of(check, "fever")
    caller = app_as("phil").clinic.protocol.caller_message
    app = app_as("phil")
    async with app.run_test(size=(120, 40)) as pilot:
        table = await queue_at(pilot, fever.id)
        evidence = app.screen.query_one("#evidence").render().plain
        assert f"Tell the caller: {caller}" in evidence
        assert "38.3" not in evidence and fever.message not in evidence and "Source" not in evidence
        assert table.get_cell(str(fever.id), "Message").plain == caller
        assert not {"Acknowledge", "Snooze", "Resolve"} & shown_keys(app)
        await pilot.press("a", "z", "r")  # typed ahead: each refused in one line, nothing opened
        await pilot.pause()
        assert not isinstance(app.screen, NoteDialog)
        for verb in ("acknowledge", "snooze", "resolve"):
            assert f"A nurse handles fever alerts: phone staff may not {verb} them." in notes(app)
        gap = alert_of(check, "logging-gap")
        await highlight(pilot, gap.id)
        assert {"Acknowledge", "Snooze", "Resolve"} <= shown_keys(app)  # routine: hers to handle
        assert gap.message in app.screen.query_one("#evidence").render().plain
    assert check.store.alerts.get(fever.id).state is AlertState.OPEN


async def test_a_phone_clerk_reads_the_clinics_own_words(app_as, service_ctx, tmp_path):
    from caseload.application.protocol import use_protocol

    words = "Thanks for calling: your nurse will ring you before 4 pm."
    (tmp_path / "words.toml").write_text(f'caller_message = "{words}"\n', encoding="utf-8")
    use_protocol(service_ctx("ada"), str(tmp_path / "words.toml"))
    fever = alert_of(service_ctx("ada"), "fever")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        app.push_screen(RecordScreen("P0002"))
        await settle(pilot)
        await pilot.press("4")
        await settle(pilot)
        await highlight(pilot, fever.id)
        assert f"Tell the caller: {words}" in app.screen.query_one("#evidence").render().plain


async def test_a_note_typed_in_one_burst_after_the_key_goes_into_the_dialog(app_as, service_ctx):
    check = service_ctx("ada")
    fever = alert_of(check, "fever")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await queue_at(pilot, fever.id)
        await burst(pilot, "a", *"called her, quiet day", "enter")  # its l, q and r act on nothing behind
        assert isinstance(app.screen, AlertQueueScreen)
    stored = check.store.alerts.get(fever.id)
    assert (stored.state, stored.note) == (AlertState.ACKNOWLEDGED, "called her, quiet day")


async def test_the_outlook_says_when_there_is_no_coverline_yet(app_as):
    app = app_as("nora")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        app.push_screen(RecordScreen("P0003"))  # cycle day 5: too early for a coverline (three-over-six needs 6 lows)
        await settle(pilot)
        await pilot.press("3")
        await settle(pilot)
        outlook = app.screen.query_one("#outlook-text").render().plain
        assert "no coverline yet" in outlook and "coverline - C" not in outlook


@pytest.mark.parametrize("kind, patient_id, tab, shown", [
    ("fever", "P0002", "4", "alerts"),
    ("fever", "P0002", "5", "entries"),
    ("window-approaching", "P0003", "4", "alerts"),
    ("logging-gap", "P0004", "2", "cycles"),
])
async def test_a_tab_typed_in_one_burst_with_enter_shows_that_tab_of_the_alerts_patient(app_as, service_ctx, kind,
                                                                                        patient_id, tab, shown):
    alert = alert_of(service_ctx("ada"), kind)
    app = app_as("ada")  # the whole caseload's queue
    async with app.run_test(size=(80, 24)) as pilot:
        await queue_at(pilot, alert.id)
        await burst(pilot, "enter", tab)
        await settle(pilot)
        record = app.screen
        assert isinstance(record, RecordScreen) and record.patient_id == patient_id
        assert record.query_one("TabbedContent").active == shown


@pytest.mark.parametrize("downs, patient_id", [(2, "P0003"), (3, "P0004")])
async def test_arrows_and_enter_in_one_burst_open_the_alert_the_arrows_reached(app_as, downs, patient_id):
    """The whole caseload's queue, in order: today fever and window open (P0002), a heading, then
    window soon (P0003) and charting gap (P0004): the arrows pass the heading before Enter is read."""
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_queue(pilot)
        await burst(pilot, *["down"] * downs, "enter")
        await settle(pilot)
        assert isinstance(app.screen, RecordScreen) and app.screen.patient_id == patient_id


async def test_keys_typed_after_an_acknowledging_enter_are_named_not_used(app_as, service_ctx):
    """A second "a" typed straight on could acknowledge the next alert unread: it is not passed on to
    the queue, and the line that confirms the acknowledgement names it."""
    check = service_ctx("ada")
    fever = alert_of(check, "fever")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await queue_at(pilot, fever.id)
        await burst(pilot, "a", *"rang her", "enter", "a", *"ok", "enter")
        await settle(pilot)
        assert isinstance(app.screen, AlertQueueScreen)
        assert (f"Acknowledged #{fever.id} fever for P0002. Typed after Enter and not used: 'aok⏎'. "
                "Type it again once you have read the above.") in notes(app)
    assert [a.id for a in check.store.alerts.all() if a.state is AlertState.ACKNOWLEDGED] == [fever.id]


async def test_an_acknowledgement_typed_in_one_burst_from_the_list_waits_for_the_queue(app_as, service_ctx, monkeypatch):
    """`a` on the list, then `a`, a note and Enter, all at once, and the alerts slow to read: the keys
    wait for the queue and acknowledge its first alert; none reaches the list behind (its `n`)."""
    check = service_ctx("ada")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        read = app.clinic.alerts
        monkeypatch.setattr(app.clinic, "alerts", lambda *args: time.sleep(0.4) or read(*args))
        patients = len(check.store.patients.all())
        await burst(pilot, "a", "a", *"rang her, booked review", "enter")
        await pilot.pause(0.6)
        await settle(pilot)
        assert isinstance(app.screen, AlertQueueScreen)
    handled = [a for a in check.store.alerts.unresolved() if a.note == "rang her, booked review"]
    assert [(a.state, a.handled_by) for a in handled] == [(AlertState.ACKNOWLEDGED, "nell")]
    assert len(check.store.patients.all()) == patients
