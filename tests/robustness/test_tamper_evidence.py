"""The audit proves itself: changes made with plain SQL behind the tool's back are found by `check`,
named (which rows, which trigger), and answered with exit code 1; a damaged file is reported, never
crashed on, and refused by every other command."""

from __future__ import annotations

import hashlib
import json
import os
import sqlite3

import pytest

from caseload.store import Store, migrations
from caseload.store.backup_restore import check_file
from tests.robustness.robust_support import assert_clean_exit, damage_index_page, snapshot

CHAIN_STEP = migrations.MIGRATIONS.index(migrations._audit_chain)  # the schema just before the chain
AUDIT_COLUMNS = "id, at, by_staff, os_account, action, tbl, row_id, before, after, day_of_record"


def sql(path, *statements: str) -> None:
    """Run statements as someone with the file and the sqlite3 shell would: no caseload code involved."""
    conn = sqlite3.connect(path, isolation_level=None)
    try:
        for statement in statements:
            conn.execute(statement)
    finally:
        conn.close()


def trigger_sql(path, name: str) -> str:
    conn = sqlite3.connect(path)
    try:
        return conn.execute("SELECT sql FROM sqlite_master WHERE name = ?", (name,)).fetchone()[0]
    finally:
        conn.close()


def test_each_audit_row_hashes_its_content_and_the_previous_hash(clinic):
    conn = sqlite3.connect(clinic.db)
    rows = conn.execute(f"SELECT {AUDIT_COLUMNS}, hash FROM audit ORDER BY id").fetchall()
    conn.close()
    previous = "0" * 64
    for *content, stored in rows:
        # SHA-256 (FIPS 180-4, Python's hashlib) over the previous hash, a newline and the row as compact JSON.
        text = previous + "\n" + json.dumps(content, ensure_ascii=False, separators=(",", ":"))
        assert stored == hashlib.sha256(text.encode()).hexdigest()
        previous = stored
    assert len(rows) >= 7  # init, 3 staff, 1 patient, 2 entries: every write is in the chain


def test_a_sound_store_passes_check(clinic):
    result = clinic("check")
    assert result.exit_code == 0, result.output
    for line in ("integrity: ok", "unbroken", "triggers: all present and unchanged", "matches it", "all agree"):
        assert line in result.output


def test_bulk_and_single_writes_extend_one_chain(tmp_path):
    """The bulk loader and the one-row writes append through the same function: the chain stays whole."""
    from tools.bench.build import BenchSpec, build
    built = build(BenchSpec(patients=3, years=1), tmp_path / "bench.db")
    with Store(built.path) as store:
        report = store.check()
    assert report.ok, report.first_problem()
    assert report.audit_rows > built.entries  # one row per entry, plus staff, patients and alerts


def write_around_triggers(table: str, statement: str) -> list[str]:
    """Lift a table's append-only triggers, run a statement, put the very same triggers back."""
    names = [f"{table}_no_update", f"{table}_no_delete", f"{table}_no_replace"]
    return [*(f"DROP TRIGGER {n}" for n in names), statement, *("{%s}" % n for n in names)]


ATTACKS = {
    "clerk promoted to admin": (["UPDATE staff SET role = 'admin' WHERE id = 'phil'"],
                                "staff phil differs from its latest audit row (role)"),
    "patient moved to another nurse": (["UPDATE patient SET nurse_id = 'sue' WHERE id = 'P0001'"],
                                       "patient P0001 differs from its latest audit row (nurse_id)"),
    "entry slipped in without audit": (
        ["INSERT INTO entry (id, patient_id, day, kind, raw, number, by_staff, os_account, at) VALUES"
         " (99, 'P0001', '2026-11-30', 'temp', '36.9', 36.9, 'phil', 'phil', '2026-11-30T08:00:00+00:00')"],
        "entry 99 has no audit row"),
    "audit row rewritten": (write_around_triggers("audit", "UPDATE audit SET by_staff = 'sue' WHERE id = 6"),
                            "broken at rows 6"),
    "audit row redated": (write_around_triggers("audit", "UPDATE audit SET day_of_record = '2026-01-01' WHERE id = 5"),
                          "broken at rows 5"),
    "audit row removed": (write_around_triggers("audit", "DELETE FROM audit WHERE id = 4"), "broken at rows 5"),
    "append-only trigger dropped": (["DROP TRIGGER entry_no_delete"], "trigger entry_no_delete is missing"),
    "append-only trigger weakened": (
        ["DROP TRIGGER audit_no_update",
         "CREATE TRIGGER audit_no_update BEFORE UPDATE ON audit WHEN 0 BEGIN SELECT RAISE(ABORT, 'no'); END"],
        "trigger audit_no_update differs from the one caseload makes"),
    "hidden trigger swallows audit rows": (
        ["CREATE TRIGGER audit_quiet BEFORE INSERT ON audit WHEN NEW.action = 'entry.log'"
         " BEGIN SELECT RAISE(IGNORE); END"],
        "trigger audit_quiet was not made by caseload"),
    "column added": (["ALTER TABLE staff ADD COLUMN pin TEXT"], "table staff differs from the one caseload makes"),
}


@pytest.mark.parametrize("attack", list(ATTACKS))
def test_check_names_every_change_made_behind_the_tools_back(clinic, attack):
    statements, finding = ATTACKS[attack]
    saved = {n: trigger_sql(clinic.db, n) for n in ("audit_no_update", "audit_no_delete", "audit_no_replace")}
    sql(clinic.db, *(s.format(**saved) if s.startswith("{") else s for s in statements))
    result = clinic("check")
    assert_clean_exit(result)
    assert result.exit_code == 1
    assert finding in result.output, result.output


@pytest.mark.parametrize("edit, finding", [
    ("WHEN 0 BEGIN", "triggers: trigger entry_no_delete differs from the one caseload makes"),
    ("BEGIN,", "integrity: unreadable: malformed database schema (entry_no_delete)"),
], ids=["weakened", "unparseable"])
def test_a_trigger_edited_through_writable_schema_is_found(clinic, edit, finding):
    """Editing the stored SQL directly leaves the trigger's name in place: only its text shows it,
    and a text SQLite cannot parse is reported, not crashed on."""
    sql(clinic.db, "PRAGMA writable_schema = ON",
        f"UPDATE sqlite_master SET sql = replace(sql, 'BEGIN', '{edit}') WHERE name = 'entry_no_delete'")
    result = clinic("check")
    assert_clean_exit(result)
    assert result.exit_code == 1
    assert finding in result.output, result.output


def test_a_write_whose_audit_row_is_swallowed_is_refused(clinic):
    """Even before anyone runs check: a change whose audit row did not land is rolled back."""
    sql(clinic.db, "CREATE TRIGGER audit_quiet BEFORE INSERT ON audit BEGIN SELECT RAISE(IGNORE); END")
    before = snapshot(clinic.db)
    result = clinic("log", "P0001", "temp", "36.55")
    assert_clean_exit(result)
    assert result.exit_code == 1 and "audit rows were not written" in result.stderr
    assert snapshot(clinic.db) == before


@pytest.fixture
def damaged(clinic):
    """The clinic store with its entry index's root page overwritten by junk."""
    damage_index_page(clinic.db)
    return clinic


def test_check_reports_a_damaged_file_without_crashing(damaged):
    result = damaged("check")
    assert_clean_exit(result)
    assert result.exit_code == 1
    assert result.output.startswith("integrity: ") and "integrity: ok" not in result.output
    assert "restore a backup" in result.output


def file_bytes(path) -> tuple[bytes, bytes]:
    """The store file and its write-ahead log (empty when there is none): a write lands in one of them."""
    wal = path.with_name(path.name + "-wal")
    return path.read_bytes(), wal.read_bytes() if wal.exists() else b""


def assert_refused_as_damaged(result) -> None:
    assert_clean_exit(result)
    assert result.exit_code == 1
    assert "is damaged" in result.stderr and "run 'caseload check', then restore a backup" in result.stderr


@pytest.mark.parametrize("command", [("log", "P0001", "temp", "36.5"), ("backup", "copy.db"), ("void", "1", "--reason", "typed twice"),
                                     ("patient", "add", "P0002", "--name", "Ona Test", "--born", "1990-01-01"),
                                     ("staff", "add", "nia", "--name", "Nia Nurse", "--role", "nurse")])
def test_every_write_refuses_a_damaged_store_in_one_line(damaged, command, tmp_path):
    """The damage is in a page none of these commands reads before writing: the quick check every
    connection runs before its first write finds it."""
    before = file_bytes(damaged.db)
    result = damaged(*command)
    assert_refused_as_damaged(result)
    assert file_bytes(damaged.db) == before  # nothing written into it, nor into its log
    assert not (tmp_path / "copy.db").exists()  # no copy of a damaged store passes for a backup


@pytest.mark.parametrize(("command", "page"), [
    (("list",), "patient"), (("list", "--json"), "patient_state"), (("alerts",), "alert"),
    (("entries", "P0001"), "entry"), (("show", "P0001"), "entry"),
    (("list",), "staff"),  # read while the command opens the store, to know who is acting
])
def test_a_read_that_meets_damage_is_refused_in_one_line(clinic, command, page):
    damage_index_page(clinic.db, page)
    before = file_bytes(clinic.db)
    result = clinic(*command)
    assert_refused_as_damaged(result)
    assert result.stdout == ""
    assert file_bytes(clinic.db) == before


def test_a_read_that_meets_no_damage_answers_and_the_next_write_is_refused(damaged):
    """Opening does not read the whole file: the list reads no entry index page, so it answers; the
    log that follows is refused before it writes."""
    listed = damaged("list", "--json")
    assert listed.exit_code == 0, listed.output
    assert [p["patient"] for p in json.loads(listed.stdout)] == ["P0001"]
    assert_refused_as_damaged(damaged("log", "P0001", "temp", "36.5"))


def store_before_chain(path, statements: list[str]):
    """A store at the schema just before the audit chain, holding the rows the statements write."""
    conn = sqlite3.connect(path, isolation_level=None)
    conn.execute("BEGIN")
    for step in migrations.MIGRATIONS[:CHAIN_STEP]:
        step(conn)
    for statement in statements:
        conn.execute(statement)
    conn.execute(f"PRAGMA user_version = {CHAIN_STEP}")
    conn.execute("COMMIT")
    conn.close()
    return path


def test_a_store_upgraded_to_the_chain_verifies_like_a_new_one(tmp_path, clinic):
    """A store written before the chain gets its existing rows hashed in order, and the schema it ends
    with is the one a new store gets: check passes on it."""
    ada = json.dumps({"name": "Ada", "role": "admin", "active": 1, "os_account": "ada"})
    old = store_before_chain(tmp_path / "old.db", [
        "INSERT INTO staff VALUES ('ada', 'Ada', 'admin', 1, 'ada', '2026-01-05T09:00:00+00:00')",
        *(("INSERT INTO audit (at, by_staff, os_account, action, tbl, row_id, after) VALUES"
           f" ('2026-01-0{n + 5}T09:00:00+00:00', 'ada', 'ada', 'staff.add', 'staff', 'ada', '{ada}')") for n in range(3)),
    ])
    with Store(old) as store:
        assert store.db.version == migrations.LATEST
        report = store.check()
    assert report.ok, report.first_problem()
    assert report.audit_rows == 3
    assert check_file(clinic.db).ok  # and a store made new at this version, for comparison


def test_a_damaged_store_is_restored_from_a_verified_backup_and_kept(clinic, tmp_path):
    backup = tmp_path / "backup.db"
    assert clinic("backup", str(backup)).exit_code == 0
    damaged = damage_index_page(clinic.db)
    result = clinic("restore", str(backup))
    assert result.exit_code == 0, result.output
    kept = [p for p in tmp_path.iterdir() if p.name.startswith("clinic.db.replaced-")]
    assert [p.read_bytes() for p in kept] == [damaged]  # the damaged file, byte for byte, owner-only
    assert os.stat(kept[0]).st_mode & 0o777 == 0o600
    assert clinic("check").exit_code == 0
    assert clinic("log", "P0001", "temp", "36.5").exit_code == 0


def test_over_a_damaged_store_a_clerk_may_not_restore(clinic, tmp_path, monkeypatch):
    backup = tmp_path / "backup.db"
    assert clinic("backup", str(backup)).exit_code == 0
    damaged = damage_index_page(clinic.db)
    result = clinic("--as", "phil", "restore", str(backup))
    assert_clean_exit(result)
    assert result.exit_code == 1 and "may not restore the store" in result.stderr
    assert clinic.db.read_bytes() == damaged
