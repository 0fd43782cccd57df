"""Schema versions. Each migration upgrades the file by one version inside the caller's transaction.

The version lives in `PRAGMA user_version`. Add a migration at the end; never edit a released one.
"""

from __future__ import annotations

import sqlite3
from collections.abc import Callable
from pathlib import Path

from caseload.core.parse import InputError, one_line
from caseload.core.protocol_file import overrides_of, parse_protocol

from caseload.store import chain

APPEND_ONLY = """
CREATE TRIGGER {table}_no_update BEFORE UPDATE ON {table}
BEGIN SELECT RAISE(ABORT, '{table} is append-only: rows cannot be changed'); END;
CREATE TRIGGER {table}_no_delete BEFORE DELETE ON {table}
BEGIN SELECT RAISE(ABORT, '{table} is append-only: rows cannot be deleted'); END;
-- INSERT OR REPLACE deletes the old row without firing delete triggers: refuse a taken id instead.
CREATE TRIGGER {table}_no_replace BEFORE INSERT ON {table} WHEN NEW.id IN (SELECT id FROM {table})
BEGIN SELECT RAISE(ABORT, '{table} is append-only: rows cannot be replaced'); END;
"""


def run_script(conn: sqlite3.Connection, script: str) -> None:
    """Execute statements one by one: executescript() would commit the caller's transaction."""
    statement = ""
    for piece in script.split(";"):
        statement += piece + ";"
        if sqlite3.complete_statement(statement):
            if statement.strip(" \n;"):
                conn.execute(statement)
            statement = ""


def _v1(conn: sqlite3.Connection) -> None:
    run_script(
        conn,
        """
        CREATE TABLE meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);
        CREATE TABLE staff (
            id TEXT PRIMARY KEY,
            name TEXT NOT NULL,
            role TEXT NOT NULL CHECK (role IN ('phone', 'nurse', 'supervisor', 'admin')),
            active INTEGER NOT NULL DEFAULT 1,
            os_account TEXT UNIQUE,
            created_at TEXT NOT NULL
        );
        CREATE TABLE patient (
            id TEXT PRIMARY KEY,
            name TEXT NOT NULL,
            born TEXT NOT NULL,
            nurse_id TEXT REFERENCES staff(id),
            status TEXT NOT NULL CHECK (status IN ('active', 'paused', 'discharged', 'pregnant')),
            plan TEXT NOT NULL CHECK (plan IN ('natural', 'timed', 'ovulation-induction', 'insemination')),
            created TEXT NOT NULL,
            charting_temps INTEGER NOT NULL DEFAULT 1
        );
        CREATE TABLE entry (
            id INTEGER PRIMARY KEY,
            patient_id TEXT NOT NULL REFERENCES patient(id),
            day TEXT NOT NULL,
            time TEXT,
            kind TEXT NOT NULL,
            raw TEXT NOT NULL,
            number REAL,
            word TEXT,
            scan TEXT,
            text TEXT,
            flags TEXT NOT NULL DEFAULT '',
            note TEXT NOT NULL DEFAULT '',
            by_staff TEXT NOT NULL REFERENCES staff(id),
            os_account TEXT NOT NULL,
            at TEXT NOT NULL,
            supersedes INTEGER UNIQUE REFERENCES entry(id),
            amend_reason TEXT,
            voided_reason TEXT,
            voided_by TEXT REFERENCES staff(id),
            voided_at TEXT
        );
        CREATE INDEX entry_patient_day ON entry(patient_id, day);
        -- Weekly summaries count by day or by logging time across the whole caseload.
        CREATE INDEX entry_kind_day ON entry(kind, day);
        CREATE INDEX entry_at ON entry(at);
        -- Entries are append-only: the one change allowed is a void, once, which keeps the row.
        CREATE TRIGGER entry_no_delete BEFORE DELETE ON entry
        BEGIN SELECT RAISE(ABORT, 'entry is append-only: void it with a reason instead'); END;
        CREATE TRIGGER entry_no_replace BEFORE INSERT ON entry WHEN NEW.id IN (SELECT id FROM entry)
        BEGIN SELECT RAISE(ABORT, 'entry is append-only: rows cannot be replaced'); END;
        CREATE TRIGGER entry_void_only BEFORE UPDATE ON entry
        WHEN OLD.voided_reason IS NOT NULL
          OR NEW.voided_reason IS NULL
          OR NEW.id IS NOT OLD.id OR NEW.patient_id IS NOT OLD.patient_id OR NEW.day IS NOT OLD.day
          OR NEW.time IS NOT OLD.time OR NEW.kind IS NOT OLD.kind OR NEW.raw IS NOT OLD.raw
          OR NEW.number IS NOT OLD.number OR NEW.word IS NOT OLD.word OR NEW.scan IS NOT OLD.scan
          OR NEW.text IS NOT OLD.text OR NEW.flags IS NOT OLD.flags OR NEW.note IS NOT OLD.note
          OR NEW.by_staff IS NOT OLD.by_staff OR NEW.os_account IS NOT OLD.os_account OR NEW.at IS NOT OLD.at
          OR NEW.supersedes IS NOT OLD.supersedes OR NEW.amend_reason IS NOT OLD.amend_reason
        BEGIN SELECT RAISE(ABORT, 'entry is append-only: only a single void may be recorded'); END;
        CREATE TABLE alert (
            id INTEGER PRIMARY KEY,
            patient_id TEXT NOT NULL REFERENCES patient(id),
            kind TEXT NOT NULL,
            key TEXT NOT NULL UNIQUE,
            severity TEXT NOT NULL CHECK (severity IN ('urgent', 'today', 'soon', 'info')),
            raised_on TEXT NOT NULL,
            due TEXT NOT NULL,
            message TEXT NOT NULL,
            evidence TEXT NOT NULL DEFAULT '{}',
            rule TEXT NOT NULL DEFAULT '',
            source TEXT NOT NULL DEFAULT '',
            state TEXT NOT NULL CHECK (state IN ('open', 'acknowledged', 'snoozed', 'resolved')),
            handled_by TEXT REFERENCES staff(id),
            handled_at TEXT,
            note TEXT,
            snooze_until TEXT,
            resolved_reason TEXT
        );
        CREATE INDEX alert_patient_state ON alert(patient_id, state);
        CREATE TABLE patient_state (
            patient_id TEXT PRIMARY KEY REFERENCES patient(id),
            computed_on TEXT NOT NULL,
            state TEXT NOT NULL
        );
        CREATE TABLE audit (
            id INTEGER PRIMARY KEY AUTOINCREMENT,
            at TEXT NOT NULL,
            by_staff TEXT NOT NULL,
            os_account TEXT NOT NULL,
            action TEXT NOT NULL,
            tbl TEXT NOT NULL,
            row_id TEXT,
            before TEXT,
            after TEXT
        );
        -- Weekly summaries read one week of each action, and one alert's or patient's history.
        CREATE INDEX audit_action_at ON audit(action, at);
        CREATE INDEX audit_row ON audit(row_id);
        """
    )
    run_script(conn, APPEND_ONLY.format(table="audit"))


def _audit_day_of_record(conn: sqlite3.Connection) -> None:
    """Each audit row names the clinic day its change was made as of (the date of record); rows
    written before this column existed keep NULL: their day was never recorded."""
    conn.execute("ALTER TABLE audit ADD COLUMN day_of_record TEXT")


def _status_since(conn: sqlite3.Connection) -> None:
    """The date of record of a patient's last status change: the day a pregnancy began or ended.
    Filled from the audit for patients whose status was changed before this version."""
    run_script(
        conn,
        """
        ALTER TABLE patient ADD COLUMN status_since TEXT;
        UPDATE patient SET status_since = (
            SELECT substr(a.at, 1, 10) FROM audit a
            WHERE a.tbl = 'patient' AND a.row_id = patient.id AND a.before IS NOT NULL
              AND json_extract(a.before, '$.status') IS NOT json_extract(a.after, '$.status')
            ORDER BY a.id DESC LIMIT 1
        );
        """,
    )


def _audit_chain(conn: sqlite3.Connection) -> None:
    """Each audit row carries a hash chained to the previous row's; existing rows are hashed in id order.
    The append-only triggers are lifted for the one update that fills the new column, then made again."""
    for trigger in ("no_update", "no_delete", "no_replace"):
        conn.execute(f"DROP TRIGGER audit_{trigger}")
    conn.execute("ALTER TABLE audit ADD COLUMN hash TEXT")
    previous = chain.GENESIS
    for row in conn.execute(f"SELECT {', '.join(chain.COLUMNS)} FROM audit ORDER BY id").fetchall():
        previous = chain.link(previous, row)
        conn.execute("UPDATE audit SET hash = ? WHERE id = ?", (previous, row[0]))
    run_script(conn, APPEND_ONLY.format(table="audit"))
    run_script(
        conn,
        """
        CREATE TRIGGER audit_hash_required BEFORE INSERT ON audit WHEN NEW.hash IS NULL OR length(NEW.hash) != 64
        BEGIN SELECT RAISE(ABORT, 'audit rows carry the hash that chains them: write them through caseload'); END;
        """,
    )


def _alert_episodes(conn: sqlite3.Connection) -> None:
    """A key names an episode, and an episode may be raised again after an automatic resolution:
    one live (unresolved) row per key instead of one row per key ever. Alerts record the protocol
    version that raised them. The table is rebuilt from its own definition, so columns added by
    other steps survive."""
    (table_sql,) = conn.execute("SELECT sql FROM sqlite_master WHERE type = 'table' AND name = 'alert'").fetchone()
    indexes = [r[0] for r in conn.execute(
        "SELECT sql FROM sqlite_master WHERE type = 'index' AND tbl_name = 'alert' AND sql IS NOT NULL")]
    rebuilt = table_sql.replace("key TEXT NOT NULL UNIQUE", "key TEXT NOT NULL", 1)
    conn.execute(rebuilt.replace("CREATE TABLE alert", "CREATE TABLE alert_rebuilt", 1))
    conn.execute("INSERT INTO alert_rebuilt SELECT * FROM alert")
    conn.execute("DROP TABLE alert")
    conn.execute("ALTER TABLE alert_rebuilt RENAME TO alert")
    for sql in indexes:
        conn.execute(sql)
    run_script(
        conn,
        """
        ALTER TABLE alert ADD COLUMN protocol_version INTEGER;
        CREATE INDEX alert_key ON alert(key);
        CREATE UNIQUE INDEX alert_live_key ON alert(key) WHERE state != 'resolved';
        """,
    )


PROTOCOL_APPEND_ONLY = """
CREATE TRIGGER {table}_no_update BEFORE UPDATE ON {table}
BEGIN SELECT RAISE(ABORT, '{table} is append-only: a protocol version cannot be changed'); END;
CREATE TRIGGER {table}_no_delete BEFORE DELETE ON {table}
BEGIN SELECT RAISE(ABORT, '{table} is append-only: a protocol version cannot be deleted'); END;
CREATE TRIGGER {table}_no_replace BEFORE INSERT ON {table} WHEN EXISTS (SELECT 1 FROM {table} WHERE {same})
BEGIN SELECT RAISE(ABORT, '{table} is append-only: rows cannot be replaced'); END;
"""


def _protocol_versions(conn: sqlite3.Connection) -> None:
    """The clinic protocol in force lives in the store: numbered versions, each a set of settings
    that differ from the defaults (no rows: the defaults). Version 1 is the file chosen before this
    step when it still reads as valid, else the defaults, with the reason in its source."""
    run_script(
        conn,
        """
        CREATE TABLE protocol_version (
            version INTEGER PRIMARY KEY,
            set_at TEXT NOT NULL,
            set_by TEXT NOT NULL,
            source TEXT NOT NULL
        );
        CREATE TABLE protocol_setting (
            version INTEGER NOT NULL REFERENCES protocol_version(version),
            name TEXT NOT NULL,
            value NOT NULL,
            PRIMARY KEY (version, name)
        );
        """,
    )
    source, overrides = _earlier_protocol_file(conn)
    conn.execute(
        "INSERT INTO protocol_version (version, set_at, set_by, source)"
        " VALUES (1, strftime('%Y-%m-%dT%H:%M:%S+00:00', 'now'), 'system', ?)",
        (source,),
    )
    conn.executemany("INSERT INTO protocol_setting (version, name, value) VALUES (1, ?, ?)", overrides.items())
    run_script(conn, PROTOCOL_APPEND_ONLY.format(table="protocol_version", same="version = NEW.version"))
    run_script(conn, PROTOCOL_APPEND_ONLY.format(table="protocol_setting",
                                                 same="version = NEW.version AND name = NEW.name"))


def _earlier_protocol_file(conn: sqlite3.Connection) -> tuple[str, dict]:
    """(source, overrides) of the protocol file an older store named in its meta table."""
    row = conn.execute("SELECT value FROM meta WHERE key = 'protocol_file'").fetchone()
    if row is None:
        return "defaults", {}
    try:
        protocol = parse_protocol(Path(row[0]).read_bytes().decode("utf-8"), row[0])
    except (OSError, UnicodeDecodeError, InputError) as err:
        return f"defaults: the earlier protocol file could not be imported ({one_line(str(err))})", {}
    return f"imported from {row[0]}", overrides_of(protocol)


def _patient_history(conn: sqlite3.Connection) -> None:
    """Each patient's status, plan, nurse and charting from the moment they took effect, so a past
    week's census reads registrations and status changes, not the audit trail's free-form rows.
    Filled from the audit trail of existing stores; a field an audit row does not name is taken from
    the patient as she stands."""
    run_script(
        conn,
        """
        CREATE TABLE patient_history (
            id INTEGER PRIMARY KEY,
            patient_id TEXT NOT NULL REFERENCES patient(id),
            at TEXT NOT NULL,
            status TEXT NOT NULL,
            plan TEXT NOT NULL,
            nurse_id TEXT,
            charting_temps INTEGER NOT NULL,
            by_staff TEXT NOT NULL
        );
        CREATE INDEX patient_history_patient_at ON patient_history(patient_id, at);
        INSERT INTO patient_history (patient_id, at, status, plan, nurse_id, charting_temps, by_staff)
        SELECT a.row_id, a.at, {status}, {plan}, {nurse_id}, {charting_temps}, a.by_staff
        FROM audit a JOIN patient p ON p.id = a.row_id
        WHERE a.action IN ('patient.add', 'patient.update') ORDER BY a.id;
        """.format(**{f: _named_or_current(f) for f in ("status", "plan", "nurse_id", "charting_temps")}),
    )
    run_script(conn, APPEND_ONLY.format(table="patient_history"))


def _named_or_current(field: str) -> str:
    """The field as the audit row's `after` names it (a JSON null included), else the patient's own."""
    return (f"CASE WHEN json_type(a.after, '$.{field}') IS NULL THEN p.{field} "
            f"ELSE json_extract(a.after, '$.{field}') END")


def _closed_cycles(conn: sqlite3.Connection) -> None:
    """Each patient's completed cycles as last computed, so a refresh reads only the open cycle's
    entries (derived state like patient_state: dropped and rebuilt from the entries at will); the
    counts beside each say which entries it came from. Entries get the indexes the lean reads use:
    one in the cycle engine's order (day, reading time, id), and small ones of the voided and the
    amending rows, which those counts read."""
    run_script(
        conn,
        """
        CREATE TABLE closed_cycle (
            patient_id TEXT NOT NULL REFERENCES patient(id),
            cycle_start TEXT NOT NULL,
            next_start TEXT NOT NULL,
            entries_from TEXT,
            entries INTEGER NOT NULL,
            voided INTEGER NOT NULL,
            superseded INTEGER NOT NULL,
            kept_key TEXT NOT NULL,
            result TEXT NOT NULL,
            PRIMARY KEY (patient_id, cycle_start)
        );
        CREATE INDEX entry_patient_order ON entry(patient_id, day, coalesce(time, ''));
        CREATE INDEX entry_voided ON entry(patient_id, day) WHERE voided_reason IS NOT NULL;
        CREATE INDEX entry_amends ON entry(patient_id) WHERE supersedes IS NOT NULL;
        """,
    )


LIST_MARK = """
CREATE TRIGGER list_mark_{table}_{event} AFTER {event} ON {table}
BEGIN INSERT OR REPLACE INTO list_mark (patient_id, seq)
      VALUES (NEW.{patient}, (SELECT coalesce(max(seq), 0) + 1 FROM list_mark)); END;
"""


def _list_marks(conn: sqlite3.Connection) -> None:
    """A store-wide counter, stamped on a patient whenever what her list row shows may change (her
    record, her alerts, her snapshot), so an interface re-reads only the rows that moved since it
    last looked. Kept by triggers, so every writer stamps it, whatever path it writes by."""
    run_script(
        conn,
        """
        CREATE TABLE list_mark (patient_id TEXT PRIMARY KEY, seq INTEGER NOT NULL);
        CREATE INDEX list_mark_seq ON list_mark(seq);
        INSERT INTO list_mark (patient_id, seq) SELECT id, row_number() OVER (ORDER BY id) FROM patient;
        """,
    )
    for table, patient in (("patient", "id"), ("alert", "patient_id"), ("patient_state", "patient_id")):
        for event in ("INSERT", "UPDATE"):
            run_script(conn, LIST_MARK.format(table=table, event=event, patient=patient))


def _entry_marks(conn: sqlite3.Connection) -> None:
    """Her entries stamp the same counter when logged, amended or voided, so one lookup says whether
    anything of hers changed (a refresh checks it inside each write) instead of counting her entries."""
    for event in ("INSERT", "UPDATE"):
        run_script(conn, LIST_MARK.format(table="entry", event=event, patient="patient_id"))


def _patient_ids_any_case(conn: sqlite3.Connection) -> None:
    """A patient id is unique whatever its letter case (P0103 and p0103 are one id to a clerk on the
    phone). A trigger rather than a unique index, so that a store already holding ids that differ only
    in case still upgrades: those are left as they are, and no new one can join them. The index on the
    id without case keeps the trigger's check, and the lookup of a typed id, to one index search."""
    run_script(
        conn,
        """
        CREATE INDEX patient_id_any_case ON patient(id COLLATE NOCASE);
        CREATE TRIGGER patient_id_any_case_insert BEFORE INSERT ON patient
        WHEN EXISTS (SELECT 1 FROM patient WHERE id = NEW.id COLLATE NOCASE)
        BEGIN SELECT RAISE(ABORT, 'patient id is taken, in this or another letter case: ids are unique whatever their case'); END;
        CREATE TRIGGER patient_id_any_case_update BEFORE UPDATE OF id ON patient
        WHEN EXISTS (SELECT 1 FROM patient WHERE id = NEW.id COLLATE NOCASE AND rowid != OLD.rowid)
        BEGIN SELECT RAISE(ABORT, 'patient id is taken, in this or another letter case: ids are unique whatever their case'); END;
        """,
    )


MIGRATIONS: list[Callable[[sqlite3.Connection], None]] = [
    _v1, _audit_day_of_record, _status_since, _patient_history, _audit_chain, _alert_episodes, _protocol_versions,
    _closed_cycles, _list_marks, _entry_marks, _patient_ids_any_case,
]
LATEST = len(MIGRATIONS)


def pending(current: int) -> list[tuple[int, Callable[[sqlite3.Connection], None]]]:
    """The migrations that take a file at `current` to LATEST, as (target version, step)."""
    return [(v, step) for v, step in enumerate(MIGRATIONS, start=1) if v > current]
