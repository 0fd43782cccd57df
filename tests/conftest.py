"""Shared fixtures: a real store file in a temporary folder, staff of every role, a fixed day."""

from __future__ import annotations

from datetime import date

import pytest

from caseload.core.model import Actor, Role
from caseload.application.context import Context
from caseload.application.identity import os_account
from caseload.application.patients import add_patient
from caseload.application.staff import add_staff, init_store
from caseload.store import Store

TODAY = date(2026, 12, 1)
END_TO_END = ("tui", "robustness", "tools")  # folders whose tests drive the whole program; marked slow


def pytest_collection_modifyitems(items) -> None:
    """`-m "not slow"` runs the fast unit tests alone; CI runs everything."""
    for item in items:
        if item.path.relative_to(item.config.rootpath).parts[1:2] in [(name,) for name in END_TO_END]:
            item.add_marker(pytest.mark.slow)


@pytest.fixture
def store(tmp_path):
    s = Store(tmp_path / "caseload.db")
    yield s
    s.close()


@pytest.fixture
def admin(store) -> Actor:
    return init_store(store, "admin1", "Ada Admin", os_account())


@pytest.fixture
def staffed(store, admin):
    """A store with one member of each role; returns {role: Actor}."""
    ctx = Context(store, admin, TODAY)
    actors = {Role.ADMIN: admin}
    for sid, role in (("phone1", "phone"), ("nurse1", "nurse"), ("super1", "supervisor")):
        member = add_staff(ctx, sid, f"Test {role}", role)
        actors[member.role] = Actor(member, "tester")
    return actors


@pytest.fixture
def as_role(store, staffed):
    """Context factory: as_role(Role.NURSE) acts as that role's staff member on TODAY."""

    def make(role: Role, today: date = TODAY) -> Context:
        return Context(store, staffed[role], today)

    return make


@pytest.fixture
def patient(as_role):
    return add_patient(as_role(Role.NURSE), "P0001", "Test Patient", "1992-05-17", nurse="nurse1")
