"""Check and restore as Clinic methods: the Report of the verification, and restores audited in the
restored store with the date of record, the chain still whole after them (over a sound store and
over one too damaged to open)."""

from __future__ import annotations

import json
from datetime import date

import pytest
from click.testing import CliRunner

from caseload.application.clinic import Clinic, Identity
from caseload.application.errors import StoreError
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
    (kept,) = (p for p in db.parent.glob("clinic.db.replaced-*") if not p.name.endswith("-wal"))
    assert kept.read_bytes() == damaged
