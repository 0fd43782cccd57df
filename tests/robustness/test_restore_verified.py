"""Restore verifies a backup as check does, refuses crafted and mis-shaped files before anything is
replaced, keeps the replaced store, and will not drop newer data without --force."""

from __future__ import annotations

import os
import re
import sqlite3

import pytest

from caseload.store import migrations
from caseload.store.backup_restore import check_file
from tests.robustness.robust_support import assert_clean_exit, snapshot
from tests.robustness.test_tamper_evidence import CHAIN_STEP, sql, store_before_chain, trigger_sql


@pytest.fixture
def backup(clinic, tmp_path):
    path = tmp_path / "backup.db"
    assert clinic("backup", str(path)).exit_code == 0
    return path


def refused(clinic, *args) -> str:
    """Run a restore expected to be refused; check that nothing changed and no staging file stayed."""
    before = snapshot(clinic.db)
    result = clinic("restore", *args)
    assert_clean_exit(result)
    assert result.exit_code == 1, result.output
    assert snapshot(clinic.db) == before
    assert not [p for p in clinic.db.parent.iterdir() if ".restore-" in p.name or ".replaced-" in p.name]
    return result.stderr


def test_a_backup_with_a_clerk_promoted_by_plain_sql_is_refused(clinic, backup):
    sql(backup, "UPDATE staff SET role = 'admin' WHERE id = 'phil'")
    assert "staff phil differs from its latest audit row (role): not restored" in refused(clinic, str(backup))


def test_a_backup_with_a_trigger_that_suppresses_audit_rows_is_refused(clinic, backup):
    sql(backup, "CREATE TRIGGER keep_quiet BEFORE INSERT ON audit WHEN NEW.tbl = 'entry' BEGIN SELECT RAISE(IGNORE); END")
    assert "trigger keep_quiet was not made by caseload: not restored" in refused(clinic, str(backup), "--force")


def test_a_backup_whose_audit_was_rewritten_is_refused(clinic, backup):
    sql(backup, "DROP TRIGGER audit_no_update", "UPDATE audit SET os_account = 'nobody' WHERE id = 3")
    # The trigger left dropped is named first; the rewritten row shows in the chain.
    assert "trigger audit_no_update is missing" in refused(clinic, str(backup))
    conn = sqlite3.connect(backup)
    conn.execute(trigger_sql(clinic.db, "audit_no_update"))
    conn.commit()
    conn.close()
    assert "the audit chain breaks at row 3: not restored" in refused(clinic, str(backup))


def test_right_table_names_with_wrong_columns_are_refused_before_anything_is_replaced(clinic, tmp_path):
    fake = tmp_path / "fake.db"
    sql(fake, "CREATE TABLE staff (id, who)", "CREATE TABLE patient (id, name)", "CREATE TABLE entry (id, what)",
        "CREATE TABLE audit (id, note)", "CREATE TABLE meta (key, value)", f"PRAGMA user_version = {migrations.LATEST}")
    stderr = refused(clinic, str(fake), "--force")
    assert re.search(r"(table|index|trigger) \w+ (is missing|differs from the one caseload makes): not restored", stderr)


@pytest.fixture
def newer_work(clinic, backup):
    """After the backup: 5 entries logged and a fever alert acknowledged."""
    for n in range(4):
        assert clinic("log", "P0001", "note", f"called in {n}").exit_code == 0
    assert clinic("log", "P0001", "temp", "38.6").exit_code == 0  # a fever: an alert to acknowledge
    alert_id = snapshot(clinic.db)["alert"][-1][0]
    assert clinic("ack", str(alert_id), "--note", "advised to call the GP").exit_code == 0
    return clinic


def test_restoring_an_older_backup_says_what_would_be_lost_and_needs_force(newer_work, backup):
    stderr = refused(newer_work, str(backup))
    assert "entries: 5, alerts handled: 1, other changes: 0" in stderr
    # Rows past the common history: the backup's own row, 5 logs, the alert raised, its acknowledgement.
    assert "audit rows: 8, written " in stderr and "add --force" in stderr
    assert re.search(r"written \d{4}-\d\d-\d\dT[\d:]+\+00:00 to \d{4}-\d\d-\d\dT[\d:]+\+00:00", stderr)


def test_a_forced_restore_keeps_the_replaced_store_beside_it(newer_work, backup):
    held = snapshot(newer_work.db)
    result = newer_work("restore", str(backup), "--force")
    assert result.exit_code == 0, result.output
    assert "entries: 5, alerts handled: 1" in result.output
    kept = [p for p in newer_work.db.parent.iterdir() if p.name.startswith("clinic.db.replaced-")]
    assert len(kept) == 1 and re.fullmatch(r"clinic\.db\.replaced-\d{8}T\d{6}Z", kept[0].name)
    assert os.stat(kept[0]).st_mode & 0o777 == 0o600
    assert snapshot(kept[0]) == held  # the replaced store, whole
    assert len(snapshot(newer_work.db)["entry"]) == len(held["entry"]) - 5
    assert newer_work("check").exit_code == 0


def test_the_latest_backup_restores_without_force(clinic, backup):
    """Only the backup's own audit row is missing from it: upkeep, not data."""
    result = clinic("restore", str(backup))
    assert result.exit_code == 0, result.output
    assert clinic("check").exit_code == 0


def test_a_backup_from_before_the_chain_is_upgraded_and_verified(clinic, tmp_path):
    """An older backup is brought to the current schema in the staging file, then checked again."""
    old = store_before_chain(tmp_path / "old.db", [])
    result = clinic("restore", str(old), "--force")
    assert result.exit_code == 0, result.output
    assert f"(schema {CHAIN_STEP})" in result.output
    assert check_file(clinic.db).ok  # the restore's own audit row chained onto the upgraded file
