"""Backups taken while others write, and restores that refuse anything but a whole store of ours."""

from __future__ import annotations

import multiprocessing
import os
import re
import shutil
import sqlite3
import time
from pathlib import Path

import pytest

from caseload.store import migrations
from tests.robustness.robust_support import assert_clean_exit, audit_mismatches, integrity, snapshot, steady_writer


def test_backup_while_a_writer_process_runs(clinic, tmp_path):
    """Each copy is a consistent moment: whole, every entry with its audit row, owner-only."""
    acks = tmp_path / "acks.txt"
    writer = multiprocessing.get_context("fork").Process(
        target=steady_writer, args=(str(clinic.db), "phil", "P0001", 2.0, str(acks)))
    writer.start()
    time.sleep(0.3)
    copies = []
    for n in range(4):
        target = tmp_path / f"during-{n}.db"
        result = clinic("backup", str(target))
        assert result.exit_code == 0, result.output
        copies.append(target)
        time.sleep(0.3)
    writer.join()
    assert writer.exitcode == 0
    sizes = []
    for copy in copies:
        assert os.stat(copy).st_mode & 0o777 == 0o600
        assert integrity(copy) == ["ok"]
        assert audit_mismatches(copy) == 0
        sizes.append(len(snapshot(copy)["entry"]))
    assert sizes == sorted(sizes) and sizes[0] < sizes[-1]  # taken while entries kept arriving
    acked = {int(line) for line in acks.read_text().split()}
    assert acked <= {row[0] for row in snapshot(clinic.db)["entry"]}


def test_round_trip_restores_every_table_row_for_row(clinic, tmp_path):
    clinic("log", "P0001", "lh", "positive")
    clinic("amend", "2", "36.45", "--reason", "misread")
    clinic("void", "1", "--reason", "wrong patient")
    clinic("patient", "set", "P0001", "--plan", "timed")
    backup = tmp_path / "round.db"
    assert clinic("backup", str(backup)).exit_code == 0
    saved = snapshot(backup)
    clinic("log", "P0001", "symptom", "after the backup")
    clinic("patient", "add", "P0002", "--name", "Later Patient", "--born", "1990-01-01")
    held = snapshot(clinic.db)
    refused = clinic("restore", str(backup))
    assert refused.exit_code == 1 and snapshot(clinic.db) == held
    # 1 entry logged, 1 patient added after the backup; 3 audit rows (the backup's own row, the log, the patient)
    assert "entries: 1, alerts handled: 0, other changes: 1 (audit rows: 3" in refused.stderr
    result = clinic("restore", str(backup), "--force")
    assert result.exit_code == 0, result.output
    restored = snapshot(clinic.db)
    *kept, last = restored["audit"]
    assert last[4] == "store.restore"
    assert {**restored, "audit": kept, "sqlite_sequence": saved["sqlite_sequence"]} == saved
    assert restored["sqlite_sequence"] == [("audit", last[0])] and last[0] == kept[-1][0] + 1
    check = clinic("check")
    assert check.exit_code == 0 and "audit id gaps: none" in check.output


def swap_index_page(source, data: bytes) -> bytes:
    """A well-formed page in the wrong place: the file reads, only the integrity check finds it out."""
    conn = sqlite3.connect(source)
    roots = dict(conn.execute("SELECT name, rootpage FROM sqlite_master WHERE type = 'index'"))
    size = conn.execute("PRAGMA page_size").fetchone()[0]
    conn.close()
    victim, donor = roots["entry_patient_day"] - 1, roots["sqlite_autoindex_staff_1"] - 1
    return data[: victim * size] + data[donor * size:(donor + 1) * size] + data[(victim + 1) * size:]


def damaged_copies(source, tmp_path):
    """A truncated copy, a copy with a page overwritten, a newer schema, and files that are no store."""
    data = source.read_bytes()
    truncated = tmp_path / "truncated.db"
    truncated.write_bytes(data[: len(data) // 2])
    overwritten = tmp_path / "overwritten.db"
    page = 4096
    overwritten.write_bytes(data[: 2 * page] + os.urandom(page) + data[3 * page:])
    index_swapped = tmp_path / "index_swapped.db"
    index_swapped.write_bytes(swap_index_page(source, data))
    newer = tmp_path / "newer.db"
    shutil.copy(source, newer)
    conn = sqlite3.connect(newer)
    conn.execute(f"PRAGMA user_version = {migrations.LATEST + 1}")
    conn.close()
    text = tmp_path / "notes.txt"
    text.write_text("patient,day,kind,value\n")
    empty = tmp_path / "empty.db"
    empty.write_bytes(b"")
    foreign = tmp_path / "foreign.db"
    conn = sqlite3.connect(foreign)
    conn.execute("CREATE TABLE staff (id)")
    conn.execute("PRAGMA user_version = 1")
    conn.close()
    return {
        "truncated": (truncated, "damaged|fails the integrity check"),
        "overwritten": (overwritten, "damaged|fails the integrity check"),
        "index_swapped": (index_swapped, "fails the integrity check"),
        "newer": (newer, "newer than this caseload"),
        "text": (text, "damaged or not an SQLite file"),
        "empty": (empty, "not a caseload store"),
        "foreign": (foreign, "not a caseload store"),
    }


@pytest.mark.parametrize("case", ["truncated", "overwritten", "index_swapped", "newer", "text", "empty", "foreign"])
def test_restore_refuses_a_file_that_is_not_a_whole_store_of_ours(clinic, tmp_path, case):
    rows = "".join(f"P0001,-{n % 30},symptom,symptom number {n} {'x' * 200}\n" for n in range(40))
    csv_file = tmp_path / "many.csv"
    csv_file.write_text("patient,day,kind,value\n" + rows)  # enough rows for the file to span several pages
    assert clinic("import", str(csv_file)).exit_code == 0
    good = tmp_path / "good.db"
    assert clinic("backup", str(good)).exit_code == 0
    path, why = damaged_copies(good, tmp_path)[case]
    before = snapshot(clinic.db)
    result = clinic("restore", str(path))
    assert_clean_exit(result)
    assert result.exit_code == 1
    assert re.search(why, result.stderr), result.stderr
    assert snapshot(clinic.db) == before


def test_restore_refuses_the_store_itself(clinic):
    before = snapshot(clinic.db)
    result = clinic("restore", str(clinic.db))
    assert result.exit_code == 1 and "is the store itself" in result.stderr
    assert snapshot(clinic.db) == before


@pytest.mark.parametrize("who", ["phil", "nell", "sue"])
def test_restore_is_for_admins_only(clinic, tmp_path, who):
    backup = tmp_path / "b.db"
    clinic("backup", str(backup))
    before = snapshot(clinic.db)
    result = clinic("--as", who, "restore", str(backup))
    assert result.exit_code == 1 and "may not restore the store" in result.stderr
    assert snapshot(clinic.db) == before


def test_backup_refuses_an_existing_file(clinic, tmp_path):
    target = tmp_path / "taken.db"
    target.write_text("keep me")
    before = snapshot(clinic.db)
    result = clinic("backup", str(target))
    assert result.exit_code == 1 and "exists already" in result.stderr
    assert target.read_text() == "keep me" and snapshot(clinic.db) == before


@pytest.mark.parametrize("suffix", ["-journal", "-wal", "-shm"])
def test_backup_never_goes_where_sqlite_would_read_it_as_part_of_the_store(clinic, tmp_path, suffix):
    # SQLite reads a file beside the store named as its journal or write-ahead log as part of it.
    (tmp_path / "link").symlink_to(f"{clinic.db}{suffix}")
    companion = Path(f"{clinic.db}{suffix}")
    for target in (str(companion), str(tmp_path / "link")):
        before = snapshot(clinic.db)
        result = clinic("backup", target)
        assert result.exit_code == 1 and "is the store's own file" in result.stderr, result.output
        assert len(result.stderr.strip().splitlines()) == 1 and snapshot(clinic.db) == before
        # No database was written there (the store's own -wal and -shm come and go with its connections).
        assert not (companion.exists() and companion.read_bytes().startswith(b"SQLite format 3\0"))


def test_backups_and_their_journal_files_are_owner_only_whatever_the_umask(clinic, tmp_path):
    old = os.umask(0)
    try:
        target = tmp_path / "open.db"
        assert clinic("backup", str(target)).exit_code == 0
        conn = sqlite3.connect(target)  # opening a WAL backup creates its -wal and -shm files
        conn.execute("SELECT count(*) FROM entry").fetchone()
        modes = {p.name: os.stat(p).st_mode & 0o777 for p in tmp_path.glob("open.db*")}
        conn.close()
    finally:
        os.umask(old)
    assert modes == {"open.db": 0o600, "open.db-wal": 0o600, "open.db-shm": 0o600}


def test_restore_names_the_audit_ids_it_replaced(clinic, tmp_path):
    backup = tmp_path / "early.db"
    assert clinic("backup", str(backup)).exit_code == 0
    last_in_backup = snapshot(backup)["audit"][-1][0]
    clinic("log", "P0001", "symptom", "after the backup")
    clinic("log", "P0001", "note", "also after")
    last_before = snapshot(clinic.db)["audit"][-1][0]
    assert clinic("restore", str(backup), "--force").exit_code == 0
    restore_row = snapshot(clinic.db)["audit"][-1]
    assert restore_row[4] == "store.restore"
    assert f'"audit_ids_replaced": [{last_in_backup + 1}, {last_before}]' in restore_row[8]
