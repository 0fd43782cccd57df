"""A store driven through the command line, and a small clinic in it."""

from __future__ import annotations

from datetime import date

import pytest
from click.testing import CliRunner

from caseload.cli import main
from tests.application.week.conftest import fresh_clinic  # noqa: F401 - the summary command's clinic

TODAY = "2026-12-01"
DATE_OF_RECORD = date(2026, 12, 1)


@pytest.fixture
def run(tmp_path):
    """Invoke `caseload --db <tmp store> --today 2026-12-01 ARGS...` with that day as the clinic's
    date of record (given as click's obj, as tests alone may); `.db` is the store's path."""
    db = str(tmp_path / "cli.db")
    runner = CliRunner()

    def invoke(*args, **kwargs):
        return runner.invoke(main, ["--db", db, "--today", TODAY, *args], catch_exceptions=False,
                             obj=DATE_OF_RECORD, **kwargs)

    invoke.db = db
    return invoke


@pytest.fixture
def clinic(run):
    """An admin (ada), a nurse (nell), a phone clerk (phil) and patient P0001 of nell's."""
    assert run("init", "--admin", "ada", "--name", "Ada Admin").exit_code == 0
    assert run("staff", "add", "nell", "--name", "Nell Nurse", "--role", "nurse").exit_code == 0
    assert run("staff", "add", "phil", "--name", "Phil Phone", "--role", "phone").exit_code == 0
    assert run("patient", "add", "P0001", "--name", "Pia Test", "--born", "1991-04-02", "--nurse", "nell").exit_code == 0
    return run
