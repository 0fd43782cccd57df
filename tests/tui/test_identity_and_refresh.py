"""Who is acting (sign-in for an unmapped account), and changes from other terminals showing up."""

from __future__ import annotations

import asyncio

import pytest

from caseload.application.clinic import Clinic, Identity
from caseload.application.entries import log_entry
from caseload.application.errors import Refused
from caseload.tui.app import make_app
from caseload.tui.screens.caseload import CaseloadScreen
from caseload.tui.screens.sign_in import SignInScreen
from tests.tui.conftest import settle
from tests.tui.fixture_store import TODAY


async def test_an_unmapped_account_signs_in_by_taking_a_free_record(app_as, service_ctx):
    app = app_as("pat", account="newcomer-os")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        assert isinstance(app.screen, SignInScreen)
        options = app.screen.query_one("#staff")
        offered = {options.get_option_at_index(i).id: options.get_option_at_index(i).disabled
                   for i in range(options.option_count)}
        assert offered["pat"] is False  # no OS account yet
        assert offered["nell"] is True  # signed to another account: shown, not selectable
        options.highlighted = list(offered).index("pat")
        await pilot.press("enter")
        await settle(pilot)
        assert isinstance(app.screen, CaseloadScreen)
        assert app.clinic.actor.id == "pat"
    assert service_ctx("ada").store.staff.get("pat").os_account == "newcomer-os"


def test_a_refused_identity_stops_before_the_interface_opens(opened):
    with pytest.raises(Refused, match="honoured only for an admin"):
        make_app(Clinic(opened(), Identity("phil-os", as_staff="nell"), date_of_record=TODAY))


async def test_a_write_from_another_terminal_appears_after_the_interval(app_as, service_ctx):
    other = service_ctx("nora")
    app = app_as("ada", refresh_seconds=0.2)
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        table = app.screen.query_one("#caseload")
        assert table.get_cell("P0004", "last").plain.strip() == "5d"
        log_entry(other, "P0004", "temp", "36.48")
        await asyncio.sleep(0.5)
        await settle(pilot)
        assert table.get_cell("P0004", "last").plain.strip() == "0d"


async def test_stale_snapshots_get_the_morning_refresh(app_as):
    tomorrow = TODAY.replace(day=2)
    app = app_as("ada", today=tomorrow)
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot, rounds=5)
        assert all(line.snapshot.computed_on == tomorrow for line in app.roster)
        assert any(n.message.startswith("Morning refresh done") for n in app._notifications)
        assert app.screen.query_one("#caseload").get_cell("P0001", "cd").plain.strip() == "19"


async def test_a_view_of_another_day_never_runs_the_morning_refresh(app_as):
    """CASELOAD_TODAY or --today open the interface as a read-only view: the snapshots stay as stored."""
    tomorrow = TODAY.replace(day=2)
    for as_of in (TODAY.replace(year=2020), TODAY.replace(day=5)):
        app = app_as("ada", today=tomorrow, as_of=as_of)
        async with app.run_test(size=(80, 24)) as pilot:
            await settle(pilot, rounds=5)
            assert app.roster and all(line.snapshot.computed_on == TODAY for line in app.roster)
            assert not any(n.message.startswith("Morning refresh") for n in app._notifications)
            assert "read-only view" in app.screen.query_one("#status").render().plain


async def test_worker_errors_become_one_line_notifications(app_as):
    def broken():
        raise Refused("nurse1 may not do that: it needs supervisor")

    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        app.save(broken, summary=str)
        await settle(pilot)
        assert [n.message for n in app._notifications][-1] == "nurse1 may not do that: it needs supervisor"
