"""A clinic store driven through the command line, and a way to see that a refusal changed nothing."""

from __future__ import annotations

from datetime import date

import pytest
from click.testing import CliRunner

from caseload.cli import main

TODAY = date(2026, 12, 1)


class Cli:
    """`caseload --db PATH --today TODAY ...` through click's runner, exceptions caught as a user would see them."""

    def __init__(self, db):
        self.db = db
        self.runner = CliRunner()

    def __call__(self, *args, input=None):
        # color=True: click strips nothing, so the output is what a terminal would receive.
        return self.runner.invoke(main, ["--db", str(self.db), "--today", TODAY.isoformat(), *args], input=input,
                                  color=True, obj=TODAY)


@pytest.fixture
def cli(tmp_path) -> Cli:
    return Cli(tmp_path / "clinic.db")


@pytest.fixture
def clinic(cli) -> Cli:
    """admin ada (this OS account), nurse nell, phone phil, supervisor sue; patient P0001 with two entries."""
    for args in (
        ("init", "--admin", "ada", "--name", "Ada Admin"),
        ("staff", "add", "nell", "--name", "Nell Nurse", "--role", "nurse"),
        ("staff", "add", "phil", "--name", "Phil Phone", "--role", "phone"),
        ("staff", "add", "sue", "--name", "Sue Supervisor", "--role", "supervisor"),
        ("patient", "add", "P0001", "--name", "Pia Test", "--born", "1991-04-02", "--nurse", "nell"),
        ("log", "P0001", "bleed", "heavy", "--on", "-3"),
        ("log", "P0001", "temp", "36.40", "--on", "-1"),
    ):
        result = cli(*args)
        assert result.exit_code == 0, result.output
    return cli
