"""Who is acting (sign-in for an unmapped account), and changes from other terminals showing up."""

from __future__ import annotations

import asyncio
import threading

import pytest

from caseload.application.clinic import Clinic, Identity
from caseload.application.entries import log_entry
from caseload.application.errors import Refused
from caseload.presentation.glossary import refresh_progress_line
from caseload.application.staff import map_account
from caseload.tui.app import make_app
from caseload.tui.screens import caseload as caseload_screen
from caseload.tui.screens.caseload import CaseloadScreen
from caseload.tui.screens.sign_in import SignInScreen
from tests.tui.conftest import settle
from tests.tui.fixture_store import TODAY


async def test_an_unmapped_account_can_take_no_record_and_waits_for_an_admin(app_as, service_ctx):
    before = [(s.id, s.os_account) for s in service_ctx("ada").store.staff.all()]
    app = app_as("pat", account="newcomer-os")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        assert isinstance(app.screen, SignInScreen)
        assert "caseload staff map STAFF newcomer-os" in str(app.screen.query_one("#how").render())
        await pilot.press("down", "enter", "l")  # nothing to pick, no quick log before sign-in
        await pilot.press("r")
        await settle(pilot)
        assert isinstance(app.screen, SignInScreen) and not app.clinic.signed_in
        assert "Still not linked" in str(app.screen.query_one("#outcome").render())
        assert [(s.id, s.os_account) for s in service_ctx("ada").store.staff.all()] == before
        map_account(service_ctx("ada"), "pat", "newcomer-os")  # an admin, from another terminal
        await pilot.press("r")
        await settle(pilot)
        assert isinstance(app.screen, CaseloadScreen)
        assert app.clinic.actor.id == "pat"
    assert service_ctx("ada").store.staff.get("pat").os_account == "newcomer-os"


async def test_an_account_that_may_not_read_the_store_gets_one_line(app_as, monkeypatch):
    app = app_as("pat", account="outsider-os")

    def unreadable(account):
        raise PermissionError(13, "Permission denied", "/srv/caseload/caseload.db")

    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        monkeypatch.setattr(app.clinic.store.staff, "by_os_account", unreadable)
        await pilot.press("r")
        await settle(pilot)
        messages = [n.message for n in app._notifications]
        assert messages[-1] == "no permission to use the store from this account: ask an admin"
        assert all("\n" not in m and "Traceback" not in m for m in messages)


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


async def test_the_morning_refresh_shows_its_progress_and_leaves_the_clinic_free(app_as, monkeypatch):
    """It runs on a connection of its own: while it computes and writes, another thread can take the
    interface's clinic lock (a save or a list read is never held up behind it)."""
    tomorrow = TODAY.replace(day=2)
    app = app_as("ada", today=tomorrow)
    seen: list[tuple[str, bool]] = []

    def line(stage: str, done: int, total: int) -> str:
        free: list[bool] = []

        def try_lock() -> None:
            free.append(app.clinic.lock.acquire(blocking=False))
            if free[0]:
                app.clinic.lock.release()

        other = threading.Thread(target=try_lock)
        other.start()
        other.join()
        seen.append((stage, free[0]))
        return refresh_progress_line(stage, done, total)

    monkeypatch.setattr(caseload_screen, "refresh_progress_line", line)
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot, rounds=5)
        assert all(line.snapshot.computed_on == tomorrow for line in app.roster)
    assert {stage for stage, _ in seen} == {"computed", "written"}
    assert all(free for _, free in seen)
    assert refresh_progress_line("written", 3, 12) == "Saving today's picture: 25% of 12 patients… (the list stays usable meanwhile)"


async def test_a_view_of_another_day_never_runs_the_morning_refresh(app_as):
    """CASELOAD_TODAY or --today open the interface as a read-only view: the snapshots stay as stored."""
    tomorrow = TODAY.replace(day=2)
    # The fixture's patients were registered on TODAY: a view of 2020 lists none of them.
    for as_of, listed in ((TODAY.replace(year=2020), 0), (TODAY.replace(day=5), 4)):
        app = app_as("ada", today=tomorrow, as_of=as_of)
        async with app.run_test(size=(80, 24)) as pilot:
            await settle(pilot, rounds=5)
            assert len(app.roster) == listed and all(line.snapshot.computed_on == TODAY for line in app.roster)
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
