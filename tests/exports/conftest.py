"""The exports' fixtures: the weekly summary's hand-built clinic (shared with the summary's own
tests), and a context acting as the admin of the demo caseload (`demo`, from tests/conftest.py)."""

from __future__ import annotations

from datetime import date

import pytest

from caseload.application.context import Context
from caseload.application.protocol import load_protocol
from tests.application.week.conftest import clinic, fresh_clinic  # noqa: F401 - fixtures

BUILD_DAY = date(2026, 12, 1)


@pytest.fixture(scope="module")
def ctx(demo) -> Context:
    return Context(demo.store, demo.admin, BUILD_DAY, load_protocol(demo.store))
