"""Interface test fixtures: the small caseload built once, copied per test, and apps made by make_app."""

from __future__ import annotations

import shutil
from datetime import date

import pytest
from textual import events
from textual.keys import _character_to_key

from caseload.application.clinic import Clinic, Identity
from caseload.application.context import Context
from caseload.core.model import Actor
from caseload.store import Store
from caseload.tui.app import CaseloadApp, make_app
from tests.tui.fixture_store import ACCOUNTS, TODAY, build


@pytest.fixture(scope="session")
def built_caseload(tmp_path_factory):
    path = tmp_path_factory.mktemp("caseload") / "fixture.db"
    build(path).close()
    return path


@pytest.fixture
def caseload_file(built_caseload, tmp_path):
    """A private copy of the fixture store for one test."""
    path = tmp_path / "caseload.db"
    shutil.copy(built_caseload, path)
    return path


@pytest.fixture
def opened(caseload_file):
    """Stores opened on the test's copy; all are closed after the test."""
    stores: list[Store] = []

    def open_store() -> Store:
        stores.append(Store(caseload_file))
        return stores[-1]

    yield open_store
    for s in stores:
        s.close()


@pytest.fixture
def app_as(opened):
    """app_as('nell') builds the interface for that staff member's OS account, as the CLI does."""

    def make(staff_id: str, account: str | None = None, refresh_seconds: float = 60.0, today: date = TODAY,
             as_of: date | None = None) -> CaseloadApp:
        clinic = Clinic(opened(), Identity(account or ACCOUNTS[staff_id]), date_of_record=today, as_of=as_of)
        return make_app(clinic, refresh_seconds=refresh_seconds)

    return make


@pytest.fixture
def service_ctx(opened):
    """service_ctx('nell'): a services Context on a second connection, to check or change the store."""

    def make(staff_id: str) -> Context:
        store = opened()
        return Context(store, Actor(store.staff.get(staff_id), ACCOUNTS.get(staff_id, "tester")), TODAY)

    return make


async def settle(pilot, rounds: int = 2) -> None:
    """Let workers finish and their messages land (a load may start another one)."""
    for _ in range(rounds):
        await pilot.pause()
        await pilot.app.workers.wait_for_complete()
        await pilot.pause()


async def fill(pilot, text: str) -> None:
    """Replace the focused field's text at once (key by key is slow and adds nothing past a few keys)."""
    field = pilot.app.focused
    field.value = text
    field.cursor_position = len(text)
    await pilot.pause()


async def burst(pilot, *keys: str) -> None:
    """Keys as a fast typist or an SSH link delivers them: all queued before the app handles the
    first, then handled. Each is a key as `pilot.press` names it ("enter", "tab") or one character."""
    for key in keys:
        name = _character_to_key(key) if len(key) == 1 else key
        pilot.app.post_message(events.Key(name, key if len(key) == 1 else None))
    await settle(pilot)
