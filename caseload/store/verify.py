"""Verifying a store file: SQLite's integrity, the schema and triggers its migrations make, the audit
chain, and that every record agrees with its audit trail. `check` reports it; a restore refuses any
backup that does not pass it.
"""

from __future__ import annotations

import hashlib
import json
import sqlite3
from dataclasses import dataclass
from datetime import datetime
from functools import lru_cache

from caseload.store import chain, migrations

# Columns whose value the latest audit row of a staff, patient or alert record states (its `after`).
# An alert's rows (`alert_table.audit_view`) state every change to it, staff's handling as well as the
# engine's raising, escalating and resolving.
_RECORDS = {
    "staff": ("name", "role", "active", "os_account"),
    "patient": ("name", "born", "nurse_id", "status", "plan", "created", "charting_temps"),
    "alert": ("patient_id", "kind", "key", "severity", "raised_on", "due", "message", "evidence", "rule", "source",
              "state", "handled_by", "handled_at", "note", "snooze_until", "resolved_reason"),
}

# Store settings whose setting is audited (`store.init` states them in its `after`): the key each is
# stated under and the form it is stated in. The pseudonym secret is stated by its SHA-256 alone: an
# audit row is no place for a key, and the digest still shows whether the secret was changed.
_AUDITED_META = {
    "timezone": ("timezone", lambda value: value),
    "pseudonym_secret": ("pseudonym_secret_sha256", lambda value: hashlib.sha256(str(value).encode()).hexdigest()),
}


def meta_as_audited(settings: dict[str, str]) -> dict[str, str]:
    """Store settings as the audit row that sets them states them."""
    return {_AUDITED_META[key][0]: _AUDITED_META[key][1](value) for key, value in settings.items()}


@dataclass(frozen=True)
class Report:
    """What a verification found; each tuple of problems is empty when that part is sound."""

    schema_version: int
    integrity: tuple[str, ...]  # ("ok",) or SQLite's findings
    foreign_keys: int  # rows referring to a row that is not there
    audit_rows: int
    audit_head: str  # the newest row's hash: note it elsewhere to detect a rewritten chain later
    audit_gaps: tuple[tuple[int, int], ...]  # missing id ranges
    chain_breaks: tuple[int, ...]  # audit ids whose hash does not follow from the row before
    triggers: tuple[str, ...]  # triggers missing, changed or not made by the migrations
    schema: tuple[str, ...]  # tables, indexes and views that differ from the migrations'
    unaudited: tuple[str, ...]  # records without the audit row that should state them

    @property
    def ok(self) -> bool:
        return self.integrity == ("ok",) and not (
            self.foreign_keys or self.audit_gaps or self.chain_breaks or self.triggers or self.schema or self.unaudited
        )

    def first_problem(self) -> str:
        """One line naming the first thing wrong, for a refusal."""
        if self.integrity != ("ok",):
            return f"fails the integrity check ({self.integrity[0]})"
        found = [
            *self.schema[:1],
            *self.triggers[:1],
            *(f"the audit chain breaks at row {i}" for i in self.chain_breaks[:1]),
            *self.unaudited[:1],
            *(f"audit rows {a}-{b} are missing" for a, b in self.audit_gaps[:1]),
        ]
        if self.foreign_keys:
            found.append(f"{self.foreign_keys} rows refer to rows that are not there")
        return found[0] if found else "passes every check"


def verify(conn: sqlite3.Connection, thorough: bool = True) -> Report:
    """Verify the file behind `conn`. Never raises on a damaged file: the damage is the report.
    `thorough` runs SQLite's full integrity check rather than its quick check."""
    version = 0
    try:
        version = conn.execute("PRAGMA user_version").fetchone()[0]
        check = "PRAGMA integrity_check" if thorough else "PRAGMA quick_check"
        integrity = _findings(r[0] for r in conn.execute(check))
        if integrity != ("ok",):
            return _damaged(version, integrity)  # reading on could crash or mislead
        triggers, schema = _schema_problems(conn, version)
        if schema:  # tables of other columns cannot be read as ours
            return Report(version, integrity, 0, 0, "", (), (), triggers, schema, ())
        hashed = "hash" in {r[1] for r in conn.execute("PRAGMA table_info(audit)")}
        breaks, head, count = _chain(conn) if hashed else ((), "", _count(conn, "audit"))
        return Report(
            schema_version=version,
            integrity=integrity,
            foreign_keys=len(conn.execute("PRAGMA foreign_key_check").fetchall()),
            audit_rows=count,
            audit_head=head,
            audit_gaps=_gaps(conn),
            chain_breaks=breaks,
            triggers=triggers,
            schema=schema,
            unaudited=_unaudited(conn),
        )
    except sqlite3.DatabaseError as err:
        return _damaged(version, _findings([f"unreadable: {err}"]))


def _findings(rows) -> tuple[str, ...]:
    """SQLite's integrity findings one line each: a row can hold several lines, and the first opens
    with the database's name ('*** in database main ***'), which says nothing here."""
    lines = (line.strip() for row in rows for line in str(row).splitlines())
    return tuple(line for line in lines if line and not line.startswith("*** in database"))


def _damaged(version: int, integrity: tuple[str, ...]) -> Report:
    return Report(version, integrity, 0, 0, "", (), (), (), (), ())


@lru_cache
def _expected(steps: tuple) -> dict[tuple[str, str], str]:
    """Type and name of each schema object the migrations `steps` make, with its SQL."""
    conn = sqlite3.connect(":memory:", isolation_level=None)
    conn.execute("BEGIN")
    for step in steps:
        step(conn)
    return _objects(conn)


def _objects(conn: sqlite3.Connection) -> dict[tuple[str, str], str]:
    rows = conn.execute("SELECT type, name, sql FROM sqlite_master WHERE name NOT LIKE 'sqlite\\_%' ESCAPE '\\'")
    return {(kind, name): sql for kind, name, sql in rows}


def fingerprint(objects: dict[tuple[str, str], str]) -> str:
    """SHA-256 over every schema object's type, name and SQL, in name order."""
    return hashlib.sha256(json.dumps(sorted(objects.items())).encode()).hexdigest()


def _schema_problems(conn: sqlite3.Connection, version: int) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """Differences from the schema the migrations make at `version`: (trigger problems, other problems)."""
    if not 1 <= version <= migrations.LATEST:
        return (), (f"schema version {version} is not one this caseload makes (1 to {migrations.LATEST})",)
    expected = _expected(tuple(migrations.MIGRATIONS[:version]))
    found = _objects(conn)
    if fingerprint(found) == fingerprint(expected):
        return (), ()
    triggers, other = [], []
    for kind, name in sorted(expected.keys() | found.keys()):
        if (kind, name) not in found:
            problem = f"{kind} {name} is missing"
        elif (kind, name) not in expected:
            problem = f"{kind} {name} was not made by caseload"
        elif found[kind, name] != expected[kind, name]:
            problem = f"{kind} {name} differs from the one caseload makes"
        else:
            continue
        (triggers if kind == "trigger" else other).append(problem)
    return tuple(triggers), tuple(other)


def _count(conn: sqlite3.Connection, table: str) -> int:
    return conn.execute(f"SELECT count(*) FROM {table}").fetchone()[0]


def _chain(conn: sqlite3.Connection) -> tuple[tuple[int, ...], str, int]:
    """(ids where the chain breaks, the newest hash, how many rows), reading the rows in id order."""
    breaks = tuple(chain.breaks(conn.execute(f"SELECT {', '.join(chain.COLUMNS)}, hash FROM audit ORDER BY id")))
    count, head = conn.execute("SELECT count(*), (SELECT hash FROM audit ORDER BY id DESC LIMIT 1) FROM audit").fetchone()
    return breaks, head or "", count


def _gaps(conn: sqlite3.Connection) -> tuple[tuple[int, int], ...]:
    """Missing id ranges, the tail included: the id counter remembers ids no longer in the table."""
    gaps = conn.execute(
        "SELECT prev + 1, id - 1 FROM (SELECT id, lag(id, 1, 0) OVER (ORDER BY id) AS prev FROM audit) WHERE id > prev + 1"
    ).fetchall()
    issued = conn.execute("SELECT seq FROM sqlite_sequence WHERE name = 'audit'").fetchone()
    top = conn.execute("SELECT coalesce(max(id), 0) FROM audit").fetchone()[0]
    tail = [(top + 1, issued[0])] if issued and issued[0] > top else []
    return tuple(map(tuple, gaps)) + tuple(tail)


def _unaudited(conn: sqlite3.Connection) -> tuple[str, ...]:
    """Entries without the audit row that logged (or voided) them, and staff and patient records that
    differ from what their latest audit row says: changes made behind the tool's back."""
    problems = [
        f"entry {i} has no audit row" for (i,) in conn.execute(
            "SELECT id FROM entry e WHERE NOT EXISTS (SELECT 1 FROM audit a WHERE a.tbl = 'entry'"
            " AND a.row_id = CAST(e.id AS TEXT) AND a.action IN ('entry.log', 'entry.amend')) ORDER BY id")
    ]
    problems += [
        f"entry {i} is voided without an audit row" for (i,) in conn.execute(
            "SELECT id FROM entry e WHERE voided_reason IS NOT NULL AND NOT EXISTS (SELECT 1 FROM audit a"
            " WHERE a.tbl = 'entry' AND a.row_id = CAST(e.id AS TEXT) AND a.action = 'entry.void') ORDER BY id")
    ]  # fmt: skip
    for table, columns in _RECORDS.items():
        problems += [f"{table} {key} {why}" for key, why in _record_drift(conn, table, columns)]
    return tuple(problems + _meta_drift(conn))


def _meta_drift(conn: sqlite3.Connection) -> list[str]:
    """Audited store settings that differ from what their latest audit row states. A setting no audit
    row states (a store set up before it was audited, the demo's) has nothing to be compared with."""
    stated: dict = {}
    for (after,) in conn.execute("SELECT after FROM audit WHERE tbl = 'meta' AND after IS NOT NULL ORDER BY id"):
        said = _json(after)
        stated.update(said if isinstance(said, dict) else {})
    current = dict(conn.execute("SELECT key, value FROM meta"))
    return [
        f"meta {key} differs from its latest audit row" for key, (stated_as, form) in _AUDITED_META.items()
        if stated_as in stated and (current.get(key) is None or form(current[key]) != stated[stated_as])
    ]


def _record_drift(conn: sqlite3.Connection, table: str, columns: tuple[str, ...]) -> list[tuple[str, str]]:
    """Records of `table` whose columns differ from the `after` of their latest audit row."""
    pairs = ", ".join(f"'{c}', t.{c}" for c in columns)
    rows = conn.execute(
        f"SELECT t.id, json_object({pairs}),"
        # CAST: an alert's integer id then meets the audit's text row_id through its index
        f" (SELECT a.after FROM audit a WHERE a.tbl = '{table}' AND a.row_id = CAST(t.id AS TEXT)"
        " AND a.after IS NOT NULL"
        f" ORDER BY a.id DESC LIMIT 1) FROM {table} t ORDER BY t.id"
    )
    drift = []
    for key, current, stated in rows:
        if stated is None:
            drift.append((key, "has no audit row"))
            continue
        now, said = json.loads(current), json.loads(stated)
        changed = [c for c in columns if c in said and _same_kind(c, said[c]) != _same_kind(c, now[c])]
        if changed:
            drift.append((key, f"differs from its latest audit row ({', '.join(changed)})"))
    return drift


def _same_kind(column: str, value):
    """A value as the row and its audit row can both be compared: audit rows state flags as JSON
    booleans or as 0/1, as the row was written; an alert's row states its evidence as an object where
    the table holds its JSON text, and its handling time as Python prints a datetime."""
    if isinstance(value, bool):
        return int(value)
    if column == "evidence" and isinstance(value, str):
        return _json(value)
    if column == "handled_at" and isinstance(value, str):
        try:
            return datetime.fromisoformat(value)
        except ValueError:
            return value  # not a time: it can only differ from one
    return value


def _json(text: str):
    """JSON text as a value; text that is not JSON as itself (then it differs from any JSON value)."""
    try:
        return json.loads(text)
    except ValueError:
        return text
