"""No one oversteps: identity from the OS account, `--as` for admins only, the permission matrix
enforced cell by cell in the real services, inactive staff refused, owner-only files, an audit trail
that cannot be rewritten and whose gaps `caseload check` names."""

from __future__ import annotations

import os
import pwd
import sqlite3
from collections.abc import Callable
from dataclasses import dataclass, replace
from pathlib import Path

import pytest

from caseload.exports.summary_files import write
from caseload.cli import main
from caseload.core.model import Actor, Role
from caseload.application import store_care as maintenance
from caseload.application.alert_handling import acknowledge, list_alerts
from caseload.application.caseload_view import list_caseload, show_patient
from caseload.application.context import DOING, MATRIX, Context
from caseload.application.recompute import refresh_all
from caseload.application.entries import amend_entry, log_entry, patient_entries, void_entry
from caseload.application.errors import Refused
from caseload.application.identity import os_account, resolve_actor
from caseload.application.csv_import import import_csv
from caseload.application.patients import add_patient, update_patient
from caseload.application.protocol import show_protocol, use_protocol
from caseload.application.weekly_summary import export_summary
from caseload.application.clinic import Clinic, Identity
from caseload.application.referral import export_fhir, make_pack
from caseload.exports import fhir, pack_files
from caseload.application.staff import add_staff, map_account, set_active
from caseload.store import Store
from tests.robustness.robust_support import TODAY, assert_clean_exit, copy_store, snapshot


@dataclass(frozen=True)
class Env:
    """What the performers act on: a store with one entry, one alert of each sort and a backup."""

    entry_id: int
    clinical_alert: int | None
    routine_alert: int | None
    backup: Path
    protocol_file: Path
    out: Path


PERFORMERS: dict[str, Callable[[Context, Env], object]] = {
    "caseload.view": lambda ctx, env: list_caseload(ctx),
    "patient.show": lambda ctx, env: (show_patient(ctx, "P0001"), patient_entries(ctx, "P0001")),
    "patient.add": lambda ctx, env: add_patient(ctx, "P0100", "New Caller", "1993-02-03"),
    "patient.update": lambda ctx, env: update_patient(ctx, "P0001", plan="timed"),
    "entry.log": lambda ctx, env: log_entry(ctx, "P0001", "temp", "36.55", on="-4"),
    "entry.amend": lambda ctx, env: amend_entry(ctx, env.entry_id, "36.45", "misread the thermometer"),
    "entry.void": lambda ctx, env: void_entry(ctx, env.entry_id, "logged for the wrong patient"),
    "entry.import": lambda ctx, env: import_csv(ctx, b"patient,day,kind,value\nP0001,-2,lh,positive\n"),
    "alert.refresh": lambda ctx, env: refresh_all(ctx),
    "staff.add": lambda ctx, env: add_staff(ctx, "new1", "New Starter", "phone"),
    "staff.update": lambda ctx, env: (map_account(ctx, "phone1", "phone-account"), set_active(ctx, "phone1", False)),
    "store.backup": lambda ctx, env: maintenance.backup(ctx, str(env.out)),
    "store.restore": lambda ctx, env: maintenance.restore(ctx, str(env.backup)),
    "store.check": lambda ctx, env: maintenance.check(ctx),
    "alert.view": lambda ctx, env: list_alerts(ctx, "all"),
    "alert.handle": lambda ctx, env: acknowledge(ctx, env.clinical_alert, "called the patient back"),
    "alert.handle-routine": lambda ctx, env: acknowledge(ctx, env.routine_alert, None),
    "protocol.view": lambda ctx, env: show_protocol(ctx),
    "protocol.set": lambda ctx, env: use_protocol(ctx, str(env.protocol_file)),
    "summary.export": lambda ctx, env: export_summary(ctx, "2026-W48", "json", env.out, deidentify=True, render=write),
    "referral.pack": lambda ctx, env: make_pack(ctx, "P0001", env.out.with_suffix(".html"), 3, "a4", False,
                                                pack_files.render),
    "fhir.export": lambda ctx, env: export_fhir(ctx, "P0001", env.out.with_suffix(".json"), None, False, False,
                                                fhir.write_bundle),
}
CELLS = [(action, role) for action in sorted(MATRIX) for role in Role]


def performer(action: str, env: Env) -> Callable[[Context, Env], object]:
    if action == "alert.handle" and env.clinical_alert is None or action == "alert.handle-routine" and env.routine_alert is None:
        pytest.skip("the alert engine raised no open fever or logging-gap alert to handle")
    return PERFORMERS[action]


def open_alert(store: Store, kind: str) -> int | None:
    found = [a.id for a in store.alerts.for_patient("P0001") if a.kind == kind and a.state.value == "open"]
    return found[0] if found else None


@pytest.fixture
def env(store, as_role, patient, tmp_path) -> Env:
    """A period 12 days ago, a fever 6 days ago and nothing since: a clinical and a routine alert."""
    phone = as_role(Role.PHONE)
    log_entry(phone, patient.id, "bleed", "heavy", on="-12")
    entry = log_entry(phone, patient.id, "temp", "38.60", on="-6").entry
    backup = tmp_path / "backup.db"
    maintenance.backup(as_role(Role.ADMIN), str(backup))
    protocol = tmp_path / "protocol.toml"
    protocol.write_text("fever_c = 38.2\n")
    return Env(entry.id, open_alert(store, "fever"), open_alert(store, "logging-gap"), backup, protocol,
               tmp_path / "new-backup.db")


def new_audit_rows(before: dict, after: dict) -> list[tuple]:
    return after["audit"][len(before["audit"]):]


@pytest.mark.parametrize("action, role", CELLS, ids=[f"{a}-{r.value}" for a, r in CELLS])
def test_permission_cell(store, as_role, env, action, role):
    perform, ctx = performer(action, env), as_role(role)
    before = snapshot(store.path)
    if role in MATRIX[action]:
        try:
            perform(ctx, env)
        except Refused as err:  # allowed, but refused for another reason
            assert "may not" not in str(err), err
        added = new_audit_rows(before, snapshot(store.path))
        assert all(row[2] == ctx.actor.id and row[3] == ctx.actor.os_account for row in added
                   if row[4] != "store.restore")
    else:
        with pytest.raises(Refused, match="may not|clinical alert"):
            perform(ctx, env)
        assert snapshot(store.path) == before
        assert not env.out.exists()


def test_every_action_in_the_matrix_is_performed():
    assert set(MATRIX) == set(PERFORMERS)


@pytest.mark.parametrize("action", sorted(MATRIX))
def test_inactive_staff_can_do_nothing(store, as_role, env, action):
    perform = performer(action, env)
    admin = as_role(Role.ADMIN)
    ghost = replace(admin, actor=Actor(replace(admin.actor.staff, active=False), admin.actor.os_account))
    before = snapshot(store.path)
    with pytest.raises(Refused, match="inactive"):
        perform(ghost, env)
    assert snapshot(store.path) == before


def test_a_deactivated_account_is_refused_before_any_action(store, staffed):
    admin = Context(store, staffed[Role.ADMIN], TODAY)
    map_account(admin, "nurse1", "nurse-account")
    set_active(admin, "nurse1", False)
    with pytest.raises(Refused, match="inactive and can do nothing"):
        resolve_actor(store, "nurse-account")
    with pytest.raises(Refused, match="inactive"):
        resolve_actor(store, os_account(), as_staff="nurse1")


def test_an_unmapped_account_gets_nothing_until_an_admin_maps_it(store, staffed):
    admin = Context(store, staffed[Role.ADMIN], TODAY)
    before = snapshot(store.path)
    with pytest.raises(Refused, match="not mapped to a staff member: ask an admin to run 'caseload staff map STAFF newcomer'"):
        resolve_actor(store, "newcomer")
    assert Clinic(store, Identity("newcomer"), date_of_record=TODAY).check_mapped() is None and snapshot(store.path) == before
    map_account(admin, "phone1", "newcomer")
    actor = Clinic(store, Identity("newcomer"), date_of_record=TODAY).check_mapped()
    assert (actor.id, actor.role) == ("phone1", Role.PHONE)


def test_os_account_comes_from_the_os_not_the_environment(monkeypatch):
    monkeypatch.setenv("USER", "mallory")
    monkeypatch.setenv("LOGNAME", "mallory")
    monkeypatch.setenv("USERNAME", "mallory")
    monkeypatch.setenv("SUDO_USER", "mallory")  # an ordinary account's process ignores sudo's variables too
    monkeypatch.setenv("SUDO_UID", str(os.geteuid()))
    assert os_account() == pwd.getpwuid(os.geteuid()).pw_name


def test_init_maps_the_os_account_to_the_first_admin(clinic):
    conn = sqlite3.connect(clinic.db)
    assert conn.execute("SELECT id, role FROM staff WHERE os_account = ?", (os_account(),)).fetchall() == [("ada", "admin")]
    conn.close()


def test_as_is_honoured_for_an_admin_and_recorded_with_the_os_account(clinic):
    result = clinic("--as", "phil", "log", "P0001", "lh", "positive")
    assert result.exit_code == 0, result.output
    audit = [row for row in snapshot(clinic.db)["audit"] if row[4] == "entry.log"][-1]
    assert audit[2:4] == ("phil", os_account())
    entry = snapshot(clinic.db)["entry"][-1]
    assert (entry[12], entry[13]) == ("phil", os_account())  # by_staff, os_account


@pytest.fixture
def as_nurse_account(clinic, monkeypatch):
    """The command line run from the OS account mapped to nurse nell."""
    assert clinic("staff", "map", "nell", "nell-account").exit_code == 0
    monkeypatch.setattr("caseload.application.clinic.os_account", lambda: "nell-account")
    return clinic


@pytest.mark.parametrize("args", [("--as", "ada", "staff", "add", "x1", "--name", "X", "--role", "admin"),
                                  ("--as", "phil", "log", "P0001", "lh", "positive"),
                                  ("--as", "sue", "list")])
def test_as_is_refused_for_anyone_but_an_admin(as_nurse_account, args):
    before = snapshot(as_nurse_account.db)
    result = as_nurse_account(*args)
    assert_clean_exit(result)
    assert result.exit_code == 1 and "--as is honoured only for an admin's OS account" in result.stderr
    assert snapshot(as_nurse_account.db) == before


def test_a_nurse_account_acts_as_the_nurse(as_nurse_account):
    assert as_nurse_account("log", "P0001", "lh", "positive").exit_code == 0
    audit = [row for row in snapshot(as_nurse_account.db)["audit"] if row[4] == "entry.log"][-1]
    assert audit[2:4] == ("nell", "nell-account")


@pytest.mark.parametrize("who, fragment", [("nobody", "no staff member 'nobody'"), ("x\x1b[2J", "no staff member")])
def test_as_an_unknown_staff_member_is_one_line(clinic, who, fragment):
    result = clinic("--as", who, "list")
    assert_clean_exit(result)
    assert result.exit_code == 1 and fragment in result.stderr and "\x1b" not in result.stderr


def test_unmapped_account_is_refused(clinic, monkeypatch):
    monkeypatch.setattr("caseload.application.clinic.os_account", lambda: "stranger")
    before = snapshot(clinic.db)
    result = clinic("log", "P0001", "lh", "positive")
    assert result.exit_code == 1 and "not mapped to a staff member" in result.stderr
    assert snapshot(clinic.db) == before


def test_store_and_its_journal_files_are_owner_only_whatever_the_umask(cli):
    old = os.umask(0)
    try:
        assert cli("init", "--admin", "ada", "--name", "Ada Admin").exit_code == 0
        with Store(cli.db) as store:
            store.db.conn.execute("SELECT count(*) FROM staff").fetchone()
            modes = {p.name: os.stat(p).st_mode & 0o777 for p in cli.db.parent.glob("clinic.db*")}
    finally:
        os.umask(old)
    assert modes == {"clinic.db": 0o600, "clinic.db-wal": 0o600, "clinic.db-shm": 0o600}


FORGED = ("(id, at, by_staff, os_account, action, tbl, row_id, hash)"
          " VALUES (1, 'now', 'mallory', 'x', 'staff.add', 'staff', 'ada', '" + "0" * 64 + "')")


@pytest.mark.parametrize("sql", ["UPDATE audit SET by_staff = 'someone else' WHERE id = 1",
                                 "UPDATE audit SET after = NULL", "DELETE FROM audit WHERE id = 2",
                                 "DELETE FROM audit", f"INSERT OR REPLACE INTO audit {FORGED}",
                                 f"REPLACE INTO audit {FORGED}",
                                 "INSERT OR REPLACE INTO entry (id, patient_id, day, kind, raw, by_staff, os_account, at)"
                                 " VALUES (1, 'P0001', '2026-11-28', 'bleed', 'light', 'ada', 'x', 'now')",
                                 "DELETE FROM entry WHERE id = 1"])
def test_plain_sql_cannot_change_the_audit_trail_or_the_entries(clinic, sql):
    before = snapshot(clinic.db)
    conn = sqlite3.connect(clinic.db)
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        conn.execute(sql)
    conn.close()
    assert snapshot(clinic.db) == before


def test_commands_only_ever_append_to_the_audit_trail(clinic, tmp_path):
    trail = snapshot(clinic.db)["audit"]
    for args in (("amend", "2", "36.45", "--reason", "misread"), ("void", "1", "--reason", "wrong day"),
                 ("patient", "set", "P0001", "--plan", "timed"), ("staff", "deactivate", "phil"),
                 ("backup", str(tmp_path / "b.db"))):
        assert clinic(*args).exit_code == 0, args
        now = snapshot(clinic.db)["audit"]
        assert now[: len(trail)] == trail and len(now) > len(trail)
        trail = now


def tampered_copy(clinic, tmp_path, where: str) -> Path:
    """A copy whose audit trail lost a row behind the tool's back (trigger dropped first)."""
    copy = tmp_path / f"tampered-{where}.db"
    copy_store(clinic.db, copy)
    conn = sqlite3.connect(copy)
    conn.execute("DROP TRIGGER audit_no_delete")
    victim = "3" if where == "middle" else "(SELECT max(id) FROM audit)"
    conn.execute(f"DELETE FROM audit WHERE id = {victim}")
    conn.commit()
    conn.close()
    return copy


@pytest.mark.parametrize("where", ["middle", "end"])
def test_check_names_a_gap_in_the_audit_ids(clinic, tmp_path, where):
    last = snapshot(clinic.db)["audit"][-1][0]
    copy = tampered_copy(clinic, tmp_path, where)
    result = clinic.runner.invoke(main, ["--db", str(copy), "check"])
    gap = "3-3" if where == "middle" else f"{last}-{last}"
    assert result.exit_code == 1 and f"audit id gaps: {gap}" in result.output
    assert clinic("check").exit_code == 0  # the original is whole


def test_every_action_has_words_for_its_refusal():
    assert set(DOING) == set(MATRIX)


@pytest.fixture
def as_a_service(tmp_path, monkeypatch):
    """This process's account declared a service in a root-owned file, as `host setup` writes it."""
    if os.geteuid() != 0:
        pytest.skip("a service file counts only when root owns it")
    from caseload.application import identity

    monkeypatch.setattr(identity, "SERVICES_DIR", tmp_path)
    path = tmp_path / f"{pwd.getpwuid(os.geteuid()).pw_name}.toml"
    path.write_text(f'store = "{tmp_path / "store" / "caseload.db"}"\ngroup = "clinic"\n')
    path.chmod(0o644)
    return path


def test_a_service_started_by_sudo_acts_for_the_invoking_account(as_a_service, monkeypatch):
    other = pwd.getpwnam("nobody")
    monkeypatch.setenv("SUDO_USER", other.pw_name)
    monkeypatch.setenv("SUDO_UID", str(other.pw_uid))
    assert os_account() == "nobody"
    monkeypatch.setenv("SUDO_UID", str(other.pw_uid + 1))  # sudo's two variables disagree: not sudo's doing
    assert os_account() == pwd.getpwuid(os.geteuid()).pw_name
    monkeypatch.delenv("SUDO_USER")
    assert os_account() == pwd.getpwuid(os.geteuid()).pw_name


def test_a_service_file_others_could_write_is_ignored(as_a_service, monkeypatch):
    other = pwd.getpwnam("nobody")
    monkeypatch.setenv("SUDO_USER", other.pw_name)
    monkeypatch.setenv("SUDO_UID", str(other.pw_uid))
    as_a_service.chmod(0o666)
    assert os_account() == pwd.getpwuid(os.geteuid()).pw_name


def test_through_a_service_only_its_own_store_opens(as_a_service):
    from caseload.application.identity import service_store

    own = as_a_service.parent / "store" / "caseload.db"
    assert service_store(None) == own and service_store(own) == own
    with pytest.raises(Refused, match="uses its one store: run it without --db"):
        service_store(as_a_service.parent / "elsewhere.db")
