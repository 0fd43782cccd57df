"""Check and restore as Clinic methods: the Report of the verification, and restores audited in the
restored store with the date of record, the chain still whole after them (over a sound store and
over one too damaged to open)."""

from __future__ import annotations

import json
import os
import pwd
from datetime import date

import pytest
from click.testing import CliRunner

from caseload.application import identity
from caseload.application.clinic import Clinic, Identity
from caseload.application.errors import Refused, StoreError
from caseload.application.identity import host_owners, os_account
from caseload.cli import main
from caseload.store import Store
from tests.robustness.robust_support import damage_index_page

REAL = date(2026, 12, 1)  # the clinic's date of record in these tests


def cli(db, *args):
    return CliRunner().invoke(main, ["--db", str(db), *args], obj=REAL, env={})


@pytest.fixture
def stores(tmp_path):
    """A store (admin ada on this OS account, P0001 with one reading) and a backup of it taken
    before one more reading was logged."""
    db, backup = tmp_path / "clinic.db", tmp_path / "backup.db"
    for args in (("init", "--admin", "ada", "--name", "Ada Admin"),
                 ("patient", "add", "P0001", "--name", "Pia Test", "--born", "1991-04-02"),
                 ("log", "P0001", "temp", "36.4", "--on", "-1"),
                 ("backup", str(backup)),
                 ("log", "P0001", "temp", "36.5")):
        result = cli(db, *args)
        assert result.exit_code == 0, result.output
    return db, backup


def restore_rows(db) -> list:
    with Store(db) as store:
        assert store.check().ok
        return store.audit.rows("store.restore")


def test_check_is_the_full_verification(stores):
    db, _ = stores
    with Clinic.open(db, Identity.from_os(), date_of_record=REAL) as clinic:
        report = clinic.check()
    assert report.ok and report.chain_breaks == () and report.unaudited == ()
    # init, staff ada, patient, 2 entries, a backup, and whatever alerts the readings raised
    assert report.audit_rows >= 6 and len(report.audit_head) == 64


def test_a_restore_losing_data_needs_force_and_is_audited_with_the_date_of_record(stores):
    db, backup = stores
    with Clinic.open(db, Identity.from_os(), date_of_record=REAL) as clinic:
        with pytest.raises(StoreError, match="add --force"):
            clinic.restore(str(backup))
        assert sorted(e.raw for e in clinic.entries("P0001")) == ["36.4", "36.5"]  # nothing restored
        done = clinic.restore(str(backup), force=True)
        assert done.loss is not None and done.loss.audit_rows >= 1
        assert [e.raw for e in clinic.entries("P0001")] == ["36.4"]
    (row,) = restore_rows(db)
    assert row.day_of_record == REAL.isoformat()
    assert json.loads(row.after)["audit_rows_lost"] == done.loss.audit_rows
    assert done.kept.exists()


def test_a_restore_over_a_damaged_store_is_audited_with_the_date_of_record(stores):
    db, backup = stores
    damaged = damage_index_page(db)
    result = cli(db, "restore", str(backup))
    assert result.exit_code == 0, result.output
    (row,) = restore_rows(db)
    assert row.day_of_record == REAL.isoformat() and json.loads(row.after)["replaced_damaged"] is True
    assert row.by_staff == "ada"  # its staff could still be read: its admin restored it
    (kept,) = (p for p in db.parent.glob("clinic.db.replaced-*") if not p.name.endswith("-wal"))
    assert kept.read_bytes() == damaged


# --- who may restore over a store that cannot be opened


def unreadable(db) -> bytes:
    """The store with its header zeroed (SQLITE_NOTADB): nothing in it, its staff included, can be read."""
    with open(db, "r+b") as f:
        f.write(b"\0" * 100)
    return db.read_bytes()


def clerks_own_store(tmp_path, account: str):
    """A store the clerk set up herself, in which her account is an admin: a backup that verifies."""
    path = tmp_path / "mine.db"
    Clinic.create(path, Identity(account), "eve", "Eve Clerk", "Europe/London", date_of_record=REAL)
    return path


def assert_nothing_written(db, before: bytes) -> None:
    """The store as it was, and no staging file or kept copy beside it (reading its staff may leave
    the empty -wal and -shm any reader of a WAL file makes)."""
    assert db.read_bytes() == before
    wal = db.with_name("clinic.db-wal")
    assert not wal.exists() or not wal.stat().st_size
    assert {p.name for p in db.parent.iterdir() if p.name.startswith(("clinic.db", ".clinic.db"))} <= {
        "clinic.db", "clinic.db-wal", "clinic.db-shm"}


def test_a_clerks_own_backup_cannot_restore_over_a_store_whose_staff_cannot_be_read(stores, tmp_path):
    """The backup's staff are whoever wrote it: over a store that cannot say who its admins are, only
    the host's owner of the store may restore."""
    db, _ = stores
    mine = clerks_own_store(tmp_path, "phil-clerk")
    before = unreadable(db)
    with pytest.raises(Refused) as refused:
        Clinic.restore_damaged(db, str(mine), Identity("phil-clerk"), date_of_record=REAL)
    assert str(refused.value) == (f"{db} is too damaged to say who its admins are, so only the host's owner of it "
                                  f"({', '.join(host_owners(db))}) may restore over it; 'phil-clerk' is not: "
                                  "ask one of them")
    assert_nothing_written(db, before)


def test_over_a_damaged_store_whose_staff_can_be_read_they_decide(stores, tmp_path):
    """Its phone clerk is refused (and told who may), her own backup notwithstanding."""
    db, _ = stores
    assert cli(db, "staff", "add", "phil", "--name", "Phil Phone", "--role", "phone",
               "--os-account", "phil-clerk").exit_code == 0
    mine = clerks_own_store(tmp_path, "phil-clerk")
    before = damage_index_page(db)
    with pytest.raises(Refused) as refused:
        Clinic.restore_damaged(db, str(mine), Identity("phil-clerk"), date_of_record=REAL)
    assert str(refused.value) == ("phone staff may not restore the store: it needs admin; over a damaged store "
                                  f"only its own admins or the host's owner of it ({', '.join(host_owners(db))}) "
                                  "may restore")
    assert_nothing_written(db, before)


def test_the_hosts_owner_restores_over_a_store_that_is_not_a_database(stores):
    """SQLITE_NOTADB, as a store whose first bytes were overwritten: `restore` replaces it, and the
    audit row says the host's owner of the file authorised it, not a staff record."""
    db, backup = stores
    damaged = unreadable(db)
    result = cli(db, "restore", str(backup), "--force")
    assert result.exit_code == 0, result.output
    (row,) = restore_rows(db)
    assert (row.by_staff, row.os_account) == ("(host owner)", os_account())
    (kept,) = (p for p in db.parent.glob("clinic.db.replaced-*") if not p.name.endswith("-wal"))
    assert kept.read_bytes() == damaged


@pytest.fixture
def service_for(tmp_path, monkeypatch):
    """This process's account declared, in a root-owned service file, the service of `db` with
    `admins`; `caller` is the account that ran sudo."""
    if os.geteuid() != 0:
        pytest.skip("a service file counts only when root owns it")
    monkeypatch.setattr(identity, "SERVICES_DIR", tmp_path / "services")
    (tmp_path / "services").mkdir()

    def declare(db, admins: list[str], caller: str) -> None:
        path = identity.service_file(pwd.getpwuid(os.geteuid()).pw_name)
        path.write_text(f'store = "{db}"\ngroup = "clinic"\nadmins = {json.dumps(admins)}\n')
        path.chmod(0o644)
        monkeypatch.setenv("SUDO_USER", caller)
        monkeypatch.setenv("SUDO_UID", str(pwd.getpwnam(caller).pw_uid))

    return declare


def test_through_the_rule_the_admin_account_host_setup_named_restores(stores, service_for):
    db, backup = stores
    unreadable(db)
    other = next(a.pw_name for a in pwd.getpwall() if a.pw_uid not in (0, pwd.getpwnam("nobody").pw_uid))
    service_for(db, ["nobody"], other)
    with pytest.raises(Refused) as refused:
        Clinic.restore_damaged(db, str(backup), Identity.from_os(), date_of_record=REAL)
    assert f"only the host's owner of it (root, nobody) may restore over it; '{other}' is not" in str(refused.value)
    service_for(db, ["nobody"], "nobody")
    done = Clinic.restore_damaged(db, str(backup), Identity.from_os(), date_of_record=REAL)
    assert done.loss is None
    (row,) = restore_rows(db)
    assert (row.by_staff, row.os_account) == ("(host owner)", "nobody")


def test_the_hosts_owner_restores_as_itself_not_as_a_staff_member_no_one_can_vouch_for(stores):
    db, backup = stores
    before = unreadable(db)
    result = cli(db, "--as", "ada", "restore", str(backup))
    assert (result.exit_code, result.stderr) == (1, f"caseload: {db} is too damaged to say who its staff are, so "
                                                    "--as cannot be honoured: run the restore without it\n")
    assert_nothing_written(db, before)


def test_root_restoring_another_accounts_store_leaves_it_theirs(stores):
    """As on a shared host, where root may restore the service's store directly."""
    if os.geteuid() != 0:
        pytest.skip("giving a file to another account needs root")
    db, backup = stores
    nobody = pwd.getpwnam("nobody")
    for path in db.parent.glob("clinic.db*"):
        os.chown(path, nobody.pw_uid, nobody.pw_gid)
    unreadable(db)
    assert cli(db, "restore", str(backup)).exit_code == 0
    # the store, and the -wal and -shm that writing its audit row made (SQLite gives them the store's owner)
    assert {p.stat().st_uid for p in db.parent.glob("clinic.db*") if "replaced" not in p.name} == {nobody.pw_uid}
