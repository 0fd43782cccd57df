"""Schema versions. Each migration upgrades the file by one version inside the caller's transaction.

The version lives in `PRAGMA user_version`. Add a migration at the end; never edit a released one.
"""

from __future__ import annotations

import sqlite3
from collections.abc import Callable

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


MIGRATIONS: list[Callable[[sqlite3.Connection], None]] = [_v1, _audit_day_of_record, _status_since]
LATEST = len(MIGRATIONS)


def pending(current: int) -> list[tuple[int, Callable[[sqlite3.Connection], None]]]:
    """The migrations that take a file at `current` to LATEST, as (target version, step)."""
    return [(v, step) for v, step in enumerate(MIGRATIONS, start=1) if v > current]
