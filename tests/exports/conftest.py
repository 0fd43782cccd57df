"""The exports' fixtures: the weekly summary's hand-built clinic (shared with the summary's own
tests), and the invented demo caseload, built once, with a context acting as its admin."""

from __future__ import annotations

import getpass
from datetime import date

import pytest

from caseload.application.context import Context
from caseload.application.demo import build_demo
from caseload.application.protocol import load_protocol
from tests.application.week.conftest import clinic, fresh_clinic  # noqa: F401 - fixtures

BUILD_DAY = date(2026, 12, 1)


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    built = build_demo(tmp_path_factory.mktemp("demo") / "demo.db", BUILD_DAY, getpass.getuser())
    yield built
    built.store.close()


@pytest.fixture(scope="module")
def ctx(demo) -> Context:
    return Context(demo.store, demo.admin, BUILD_DAY, load_protocol(demo.store))
