"""A second temperature the same day asks "replace it?": keys typed in the same burst as the save were
meant for the next entry, so they never answer the question; the nurse answers once she has read it."""

from __future__ import annotations

from caseload.tui.screens.correct_entry import QUIET_SECONDS, CorrectEntryDialog
from caseload.tui.screens.quick_log import QuickLogScreen
from tests.tui.conftest import burst, fill, settle
from tests.tui.test_quick_log import counts, temps_today

BURST = ("l", *"pia", "enter", "t", "enter", *"36.91", "enter", "b", "enter", *"light", "enter")


def shown(app, selector: str) -> str:
    return app.screen.query_one(selector).render().plain


async def test_keys_typed_on_after_a_second_temperature_do_not_answer_the_question(app_as, service_ctx):
    check = service_ctx("ada")
    before = counts(check)
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        # a bleed typed straight after the temperature, no pause
        await burst(pilot, *"lpia", "enter", "t", "enter", *"36.91", "enter", "b", "enter", *"light", "enter")
        assert isinstance(app.screen, CorrectEntryDialog)
        assert "were not used" in shown(app, "#set-aside")
        await pilot.pause(QUIET_SECONDS * 2)
        assert app.focused.id == "reason" and app.focused.value == ""
        assert counts(check) == before  # no correction with reason "b", no bleed "light"
        assert isinstance(app.screen, CorrectEntryDialog)
        await fill(pilot, "read from the wrong day")
        await pilot.press("enter")
        await settle(pilot)
        assert isinstance(app.screen, QuickLogScreen)
    current = [e for e in temps_today(check, "P0001") if e.current]
    assert [(e.value.number, e.amend_reason) for e in current] == [(36.91, "read from the wrong day")]


async def test_keys_typed_while_the_save_is_still_running_do_not_answer_either(app_as, service_ctx):
    check = service_ctx("ada")
    before = counts(check)
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        with app.clinic.lock:  # the store is slow: every key arrives before the save's outcome
            await pilot.press(*BURST)
        await settle(pilot)
        assert isinstance(app.screen, CorrectEntryDialog)
        assert "were not used" in shown(app, "#set-aside")
        await pilot.press("escape")
        await settle(pilot)
        assert "kept as it is" in shown(app, "#result")
    assert counts(check) == before
