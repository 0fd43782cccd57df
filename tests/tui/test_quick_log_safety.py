"""The quick log puts data where the user meant it: the record's patient, today unless said, and a
second look at unusual entries. Keys are pressed in one burst, as a fast typist sends them."""

from __future__ import annotations

from datetime import timedelta

from textual import events

from caseload.core.model import Kind
from caseload.application.entries import patient_entries
from caseload.tui.screens.quick_log import QuickLogScreen
from caseload.tui.screens.record import RecordScreen
from caseload.tui.widgets.type_ahead import as_typed
from tests.tui.conftest import burst, fill, settle
from tests.tui.fixture_store import TODAY


def today_of(ctx, patient_id: str, kind: Kind):
    return [e for e in patient_entries(ctx, patient_id) if e.kind is kind and e.day == TODAY and e.current]


def shown(app, selector: str) -> str:
    return app.screen.query_one(selector).render().plain


async def press_and_settle(pilot, *keys: str) -> None:
    """Keys pressed without a pause between them, then the saves they started are let finish."""
    await pilot.press(*keys)
    await settle(pilot)


async def open_record(app, pilot, patient_id: str) -> None:
    await settle(pilot)
    app.push_screen(RecordScreen(patient_id))
    await settle(pilot)


async def test_typed_ahead_from_a_record_logs_for_that_patient(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_record(app, pilot, "P0004")
        # `l t Enter` and the reading with no pause: `t` must go to Kind, not to a patient search.
        await press_and_settle(pilot, "l", "t", "enter", *"36.61", "enter", "b", "enter", *"light", "enter")
        assert isinstance(app.screen, QuickLogScreen)
        assert shown(app, "#whose").startswith("Log a call for P0004 Noor Haddad")
        assert app.screen.query_one("#patient").disabled
    assert [e.value.number for e in today_of(check, "P0004", Kind.TEMP)] == [36.61]
    assert [e.value.word for e in today_of(check, "P0004", Kind.BLEED)] == ["light"]
    for other in ("P0001", "P0002", "P0003"):
        assert [e for e in patient_entries(check, other) if e.by == "phil"] == []


async def test_changing_the_patient_of_a_record_is_an_explicit_key(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_record(app, pilot, "P0004")
        await press_and_settle(pilot, "l", "ctrl+o", *"rosa", "enter", "m", "enter", *"sticky", "enter")
        assert shown(app, "#whose").startswith("Log a call for P0002 Rosa Lind")
    assert [e.value.word for e in today_of(check, "P0002", Kind.MUCUS)] == ["sticky"]
    assert today_of(check, "P0004", Kind.MUCUS) == []


async def test_a_change_of_patient_typed_in_one_burst_logs_for_the_new_patient(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await open_record(app, pilot, "P0004")
        await pilot.press("l")
        await settle(pilot)
        # ctrl+o and the call behind it arrive together: the name goes to the patient field it opens.
        await burst(pilot, "ctrl+o", *"rosa", "enter", "m", "enter", *"sticky", "enter")
        assert shown(app, "#whose").startswith("Log a call for P0002 Rosa Lind")
    assert [e.value.word for e in today_of(check, "P0002", Kind.MUCUS)] == ["sticky"]
    assert [e for e in patient_entries(check, "P0004") if e.day == TODAY and e.by == "nell"] == []


async def test_the_day_goes_back_to_today_after_a_save(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("l", *"noor", "enter", "b", "enter", *"heavy", "tab")
        await fill(pilot, "-1")
        # 2026-12-01 minus one day is Monday 30 November 2026 (Gregorian calendar).
        assert shown(app, "#day-warning") == "Not today: saving on Mon 30 Nov 2026 (yesterday)"
        await press_and_settle(pilot, "enter", "m", "enter", *"damp", "enter")
        assert app.screen.query_one("#day").value == "today"
        assert not app.screen.query_one("#day-warning").display
        await pilot.press("t", "enter", *"36.5", "tab")
        await fill(pilot, "-3")
        assert shown(app, "#day-warning") == "Not today: saving on Sat 28 Nov 2026 (3 days ago)"
    bleeds = [e for e in patient_entries(check, "P0004") if e.kind is Kind.BLEED and e.current]
    assert bleeds[-1].day.isoformat() == "2026-11-30"
    assert [e.value.word for e in today_of(check, "P0004", Kind.MUCUS)] == ["damp"]


async def test_an_unusual_temperature_is_saved_only_on_a_second_enter(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        # Arriving in one burst, the second Enter came before the question was on screen: no answer.
        for key in ["l", *"noor", "enter", "t", "enter", *"41.5", "enter", "enter"]:
            app.post_message(events.Key(key, "\r" if key == "enter" else key))
        await settle(pilot, rounds=5)
        assert "41.50 C is outside the usual basal range 35.5-38.5 C" in shown(app, "#result")
        assert today_of(check, "P0004", Kind.TEMP) == []
        await press_and_settle(pilot, "enter")
        assert shown(app, "#result").startswith("Saved #")
    assert [e.value.number for e in today_of(check, "P0004", Kind.TEMP)] == [41.5]


async def test_a_changed_value_is_asked_about_again(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await press_and_settle(pilot, "l", *"noor", "enter", "t", "enter", *"34.0", "enter")
        assert "34.00 C is outside" in shown(app, "#result")
        await press_and_settle(pilot, "ctrl+u", *"35.0", "enter")
        assert "35.00 C is outside" in shown(app, "#result")
        # Inside the band (35.5-38.5 C, from memory) a reading saves at once: 38.4 is a low fever, not a typo.
        await press_and_settle(pilot, "ctrl+u", *"38.4", "enter")
        assert shown(app, "#result").startswith("Saved #")
    assert [e.value.number for e in today_of(check, "P0004", Kind.TEMP)] == [38.4]


async def test_a_reading_with_its_point_missing_gets_a_hint_and_is_kept_as_typed(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("l", *"noor", "enter", "t", "enter", *"365")
        await pilot.pause()
        line = shown(app, "#check")  # never "write 365F": as Fahrenheit it would be 185 C
        assert "365F" not in line and line.endswith("did you mean 36.5?")
        await press_and_settle(pilot, "enter")
        assert app.screen.query_one("#value").value == "365"
        await pilot.press("ctrl+u", *"3.65")
        await pilot.pause()
        assert shown(app, "#check").endswith("did you mean 36.5?")
        # 365 F is (365 - 32) x 5/9 = 185 C (NIST SP 811 conversion): said, with the likely meaning.
        await pilot.press("ctrl+u", *"365F")
        await pilot.pause()
        line = shown(app, "#check")
        assert "185.00 C" in line and line.endswith("did you mean 36.5?")
        await press_and_settle(pilot, "enter")
    assert today_of(check, "P0004", Kind.TEMP) == []


async def test_a_second_mucus_the_same_day_asks_first(app_as, service_ctx):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await press_and_settle(pilot, "l", *"noor", "enter", "m", "enter", *"damp", "enter", "m", "enter", *"watery", "enter")
        assert "already a mucus entry that day" in shown(app, "#result")
        assert [e.value.word for e in today_of(check, "P0004", Kind.MUCUS)] == ["damp"]
        await press_and_settle(pilot, "enter")
        # LH may be tested twice a day (common practice): no question.
        await press_and_settle(pilot, "l", "enter", *"neg", "enter", "l", "enter", *"pos", "enter")
    assert [e.value.word for e in today_of(check, "P0004", Kind.MUCUS)] == ["damp", "watery"]
    assert len(today_of(check, "P0004", Kind.LH)) == 2


async def test_a_kind_mended_with_backspace_in_one_burst_is_saved_as_retyped(app_as, service_ctx):
    """The field's editing keys take their turn with the letters: six backspaces, then b, Enter,
    heavy, Enter arriving together save a heavy bleed, not the old text with a b on the end."""
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await press_and_settle(pilot, "l", "ctrl+u", *"P0004", "enter", *"bheavy", "enter")
        assert "kind 'bheavy' not understood" in shown(app, "#check")
        await burst(pilot, *["backspace"] * 6, "b", "enter", *"heavy", "enter")
        assert [(e.value.word, e.by) for e in today_of(check, "P0004", Kind.BLEED)] == [("heavy", "phil")]
        assert "bleed heavy" in shown(app, "#result")


async def test_a_backspace_typed_ahead_of_a_refused_enter_acts_before_it(app_as):
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await press_and_settle(pilot, "l", "ctrl+u", *"P0004", "enter", *"bheavy", "enter")
        await burst(pilot, "backspace", "b", "enter", "h")
        # bheavy, less its y, plus b: not a kind, so Enter leads nowhere and h follows the b.
        assert app.screen.query_one("#kind").value == "bheavbh"


def test_keys_set_aside_are_named_as_they_were_typed():
    keys = [events.Key("b", "b"), events.Key("enter", "\r"), events.Key("space", " "), events.Key("tab", "\t"),
            events.Key("backspace", "\x7f"), events.Key("ctrl+o", "\x0f"), events.Key("full_stop", ".")]
    assert as_typed(keys) == "b⏎ ⇥⌫<ctrl+o>."


async def test_a_reading_typed_in_two_bursts_is_kept_whole(app_as, service_ctx):
    """Keys passed on to the value field reach it before its focus does; the focus must not select
    what they typed, or the next burst ("5" after "36.5") would replace it."""
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await burst(pilot, "l", *"noor", "enter", "t", "enter", *"36.5")
        await burst(pilot, "5")
        assert app.focused.value == "36.55"
        await burst(pilot, "tab", *"yesterday")  # a field holding a value: typing replaces it, as when slow
        assert app.focused.id == "day" and app.focused.value == "yesterday"
        await burst(pilot, "enter")
    [entry] = [e for e in patient_entries(check, "P0004") if e.kind is Kind.TEMP and e.day == TODAY - timedelta(days=1)]
    assert entry.value.number == 36.55
