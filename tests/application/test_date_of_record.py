"""The date of record: writes and refreshes use the clinic's real date; another day is a read-only view,
except for an admin's audited maintenance mode. Checked through the command line (what a user runs),
with the real date fixed for the test through click's `obj` (tests alone may), and through the Clinic."""

from __future__ import annotations

import json
from datetime import date

import pytest
from click.testing import CliRunner

from caseload.application.clinic import Clinic, Identity
from caseload.application.errors import Refused
from caseload.application.identity import os_account
from caseload.cli import main
from caseload.store import Store
from tests.robustness.robust_support import snapshot

REAL = date(2026, 12, 1)  # the clinic's date of record in these tests
PAST, FUTURE = "2020-01-01", "2030-01-01"


def cli(db, *args, env=None):
    return CliRunner().invoke(main, ["--db", str(db), *args], obj=REAL, env=env or {})


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    """admin ada (this OS account), nurse nell, clerk phil; P0001 with a bleed, a rise and an hCG."""
    db = tmp_path_factory.mktemp("record") / "clinic.db"
    for args in (
        ("init", "--admin", "ada", "--name", "Ada Admin"),
        ("staff", "add", "nell", "--name", "Nell Nurse", "--role", "nurse"),
        ("staff", "add", "phil", "--name", "Phil Phone", "--role", "phone"),
        ("patient", "add", "P0001", "--name", "Pia Test", "--born", "1991-04-02", "--nurse", "nell"),
        ("log", "P0001", "bleed", "heavy", "--on", "-20"),
        ("log", "P0001", "temp", "39.2", "--on", "-1"),  # a fever: an open alert a wrong date could burn
    ):
        result = cli(db, *args)
        assert result.exit_code == 0, result.output
    return db


@pytest.fixture
def db(built, tmp_path):
    path = tmp_path / "clinic.db"
    path.write_bytes(built.read_bytes())
    return path


WRITES = [
    ("log", "P0001", "temp", "36.55", "--on", "-1"),
    ("log", "P0001", "lh", "positive"),
    ("alerts", "--refresh"),
    ("patient", "add", "P0002", "--name", "Ora Other", "--born", "1990-01-01"),
    ("patient", "set", "P0001", "--plan", "timed"),
    ("staff", "add", "nia", "--name", "Nia New", "--role", "nurse"),
]


@pytest.mark.parametrize("day", [PAST, FUTURE])
@pytest.mark.parametrize("command", WRITES, ids=lambda c: " ".join(c[:2]))
def test_a_write_or_refresh_under_another_day_is_refused_in_one_line_and_writes_nothing(db, command, day):
    before = snapshot(db)
    for who in ("--as", "phil"), ("--as", "ada"):  # a clerk, and an admin without maintenance mode
        result = cli(db, *who, "--today", day, *command)
        assert result.exit_code == 1, result.output
        lines = result.stderr.strip().splitlines()
        assert len(lines) == 1 and "read-only" in lines[0] and REAL.isoformat() in lines[0]
    assert snapshot(db) == before


def test_the_environment_is_a_view_too(db):
    before = snapshot(db)
    result = cli(db, "--as", "phil", "alerts", "--refresh", env={"CASELOAD_TODAY": PAST})
    assert result.exit_code == 1 and "read-only" in result.stderr
    result = cli(db, "--as", "phil", "log", "P0001", "temp", "36.55", "--on", "2029-12-31",
                 env={"CASELOAD_TODAY": FUTURE})
    assert result.exit_code == 1 and "read-only" in result.stderr
    assert snapshot(db) == before


@pytest.mark.parametrize("day", [PAST, "2026-11-20", FUTURE])
def test_views_of_another_day_read_and_write_nothing(db, day, tmp_path):
    before = snapshot(db)
    for command in (("show", "P0001", "--json"), ("list", "--json"), ("alerts", "--json"), ("entries", "P0001")):
        result = cli(db, "--as", "phil", "--today", day, *command)
        assert result.exit_code == 0, (command, result.output)
    shown = json.loads(cli(db, "--today", day, "show", "P0001", "--json").stdout)
    assert shown["today"] == day  # the view is computed as of the day asked for
    assert snapshot(db) == before


def test_a_summary_is_a_view_audited_with_the_date_of_record(db, tmp_path):
    result = cli(db, "--today", "2026-11-20", "summary", "--week", "2026-W46", "--format", "json",
                 "--out", str(tmp_path / "w46.json"))
    assert result.exit_code == 0, result.output
    with Store(db) as store:
        (row,) = store.audit.rows("summary.export")
    assert row.day_of_record == REAL.isoformat()
    assert json.loads(row.after)["as_of"] == "2026-11-20"


def test_the_real_date_writes_and_every_audit_row_records_it(db):
    assert cli(db, "--as", "phil", "log", "P0001", "lh", "positive").exit_code == 0
    assert cli(db, "--as", "phil", "--today", REAL.isoformat(), "alerts", "--refresh").exit_code == 0
    with Store(db) as store:
        rows = store.audit.rows()
    assert rows and {r.day_of_record for r in rows} == {REAL.isoformat()}


def test_an_admin_in_maintenance_mode_writes_as_of_another_day_and_it_is_audited(db):
    result = cli(db, "--maintenance-date", "2026-11-28", "log", "P0001", "lh", "positive")
    assert result.exit_code == 0, result.output
    assert "on 2026-11-28" in result.stdout  # "today" is the maintenance day
    with Store(db) as store:
        marks = store.audit.rows("maintenance.write")
        logged = store.audit.rows("entry.log")[-1]
    assert len(marks) == 1 and json.loads(marks[0].after)["real_date"] == REAL.isoformat()
    assert marks[0].day_of_record == logged.day_of_record == "2026-11-28"


@pytest.mark.parametrize("who", ["phil", "nell"])
def test_maintenance_mode_is_refused_to_anyone_but_an_admin(db, who):
    before = snapshot(db)
    result = cli(db, "--as", who, "--maintenance-date", "2026-11-28", "log", "P0001", "lh", "positive")
    assert result.exit_code == 1 and "only for an admin" in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1
    assert snapshot(db) == before


def test_the_clinic_refuses_writes_under_a_view_and_never_plans_a_refresh_then(db):
    with Clinic.open(db, Identity(os_account(), "nell"), as_of=date(2020, 1, 1), date_of_record=REAL) as clinic:
        lines = clinic.morning_list()
        assert not clinic.morning_refresh_due(lines)
        with pytest.raises(Refused, match="read-only"):
            clinic.refresh()
        with pytest.raises(Refused, match="read-only"):
            clinic.log("P0001", "lh", "positive")
    with Clinic.open(db, Identity(os_account(), "nell"), date_of_record=date(2026, 12, 2)) as clinic:
        assert clinic.morning_refresh_due(clinic.morning_list())  # snapshots are a day old


def test_a_demo_store_records_a_day_on_every_audit_row(demo):
    rows = demo.store.audit.rows()
    assert all(r.day_of_record for r in rows)
    # the invented history is recorded as of the days it was logged, before the day it is built for
    assert max(r.day_of_record for r in rows if r.action == "entry.log") <= REAL.isoformat()


def test_the_clinic_refresh_writes_its_batches_outside_any_one_transaction_each_with_the_day(db):
    # The whole-caseload refresh writes a few patients per transaction, so another terminal's write
    # waits for one batch, never for the whole refresh (common practice for SQLite writers).
    day = date(2026, 12, 5)  # five days without an entry: a logging gap to raise (3 days, common practice)
    with Clinic.open(db, Identity(os_account(), "nell"), date_of_record=day) as clinic:
        opened_inside: list[bool] = []
        transact = clinic.store.transact

        def watched(work, day_of_record=None):
            opened_inside.append(clinic.store.db.conn.in_transaction)
            return transact(work, day_of_record)

        clinic.store.transact = watched
        before = clinic.store.audit.last_id()
        assert clinic.refresh().patients == 1
        rows = [r for r in clinic.store.audit.rows() if r.id > before]
    assert opened_inside and not any(opened_inside)
    assert rows and {r.day_of_record for r in rows} == {day.isoformat()}


def test_the_interface_refresh_on_its_own_connection_refuses_a_view_and_records_maintenance(db):
    with Clinic.open(db, Identity(os_account(), "nell"), as_of=date(2020, 1, 1), date_of_record=REAL) as clinic:
        with pytest.raises(Refused, match="read-only"):
            clinic.refresh_on_own_connection()
    with Clinic.open(db, Identity(os_account()), maintenance_date=date(2026, 12, 5), date_of_record=REAL) as clinic:
        assert clinic.refresh_on_own_connection().patients == 1
    with Store(db) as store:
        (mark,) = store.audit.rows("maintenance.write")
        refreshed = [r for r in store.audit.rows("alert.") if r.id > mark.id]
    assert json.loads(mark.after)["doing"] == "the morning refresh" and mark.day_of_record == "2026-12-05"
    assert refreshed and {r.day_of_record for r in refreshed} == {"2026-12-05"}
