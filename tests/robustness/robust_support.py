"""Helpers for the robustness tests: reading a store file behind the tool's back, and writer processes."""

from __future__ import annotations

import random
import sqlite3
import time
from collections import Counter
from datetime import date
from pathlib import Path

from caseload.core.model import Actor
from caseload.application.context import Context
from caseload.application.entries import log_entry
from caseload.application.csv_import import import_csv
from caseload.store import Store

TODAY = date(2026, 12, 1)
BATCH_ROWS = 12
BATCH_KINDS = (("symptom", "mild cramps"), ("note", "called in"), ("lh", "negative"), ("mucus", "creamy"),
               ("bleed", "spotting"), ("intercourse", "yes"))


def assert_clean_exit(result) -> None:
    """Done, or refused with one line on stderr: never a traceback, never another exit code."""
    if result.exception is not None and not isinstance(result.exception, SystemExit):
        raise AssertionError(f"traceback: {result.exception!r}") from result.exception
    assert result.exit_code in (0, 1, 2), (result.exit_code, result.output)
    if result.exit_code == 1:
        lines = result.stderr.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith("caseload: "), result.stderr
        assert "\x1b" not in result.stderr, result.stderr


def copy_store(source: Path, target: Path) -> None:
    """A whole copy, write-ahead log included (a plain file copy can miss the latest commits)."""
    src, dst = sqlite3.connect(source), sqlite3.connect(target)
    try:
        src.backup(dst)
    finally:
        src.close()
        dst.close()


def snapshot(path: Path) -> dict[str, list[tuple]]:
    """Every row of every table (sqlite_sequence included), in rowid order: equal snapshots, equal stores."""
    conn = sqlite3.connect(f"file:{path}?mode=ro", uri=True)
    try:
        names = [r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name")]
        return {n: conn.execute(f'SELECT * FROM "{n}" ORDER BY rowid').fetchall() for n in names}
    finally:
        conn.close()


def integrity(path: Path) -> list[str]:
    conn = sqlite3.connect(path)
    try:
        return [r[0] for r in conn.execute("PRAGMA integrity_check")]
    finally:
        conn.close()


def audit_mismatches(path: Path) -> int:
    """Entries without exactly one audit row of their id, plus audit rows for entries that are not there."""
    conn = sqlite3.connect(path)
    try:
        entries = {r[0] for r in conn.execute("SELECT id FROM entry")}
        audited = Counter(int(r[0]) for r in conn.execute(
            "SELECT row_id FROM audit WHERE action IN ('entry.log', 'entry.amend')"))
    finally:
        conn.close()
    return sum(1 for e in entries if audited.get(e, 0) != 1) + sum(1 for a in audited if a not in entries)


def index_page_offset(path, name: str = "entry_patient_day") -> tuple[int, int]:
    """Byte offset and size of the root page of a table or index (by default the entry index), as
    SQLite's dbstat table lists it."""
    conn = sqlite3.connect(path)
    try:
        conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")  # every page in the main file, where we overwrite it
        page, size = conn.execute(
            "SELECT pageno, pgsize FROM dbstat WHERE name = ? AND path = '/'", (name,)).fetchone()
    finally:
        conn.close()
    return (page - 1) * size, size


def damage_index_page(path, name: str = "entry_patient_day") -> bytes:
    """Overwrite the root page of a table or index (by default the entry index) with junk; the
    damaged file's bytes."""
    offset, size = index_page_offset(path, name)
    with open(path, "r+b") as f:
        f.seek(offset)
        f.write(b"\xa5" * size)
    return path.read_bytes()


def batch_csv(token: str, patients: tuple[str, ...], rng: random.Random) -> bytes:
    """A multi-row import whose every row carries the batch token: a half import would show.
    Rows are marked as corrections, so a row that happens to repeat an earlier one is still logged."""
    lines = ["patient,day,kind,value,note,correction"]
    for row in range(BATCH_ROWS):
        kind, value = rng.choice(BATCH_KINDS)
        lines.append(f"{rng.choice(patients)},-{rng.randrange(40)},{kind},{value},{token}-{row:02d},yes")
    return ("\n".join(lines) + "\n").encode()


def crash_writer(path: str, staff_id: str, patients: tuple[str, ...], ack_path: str, seed: int) -> None:
    """Import batches and log single entries until killed. 'begin' is written before each call,
    the ack after it returned: the last 'begin' without its ack is the call the kill cut short."""
    rng = random.Random(seed)
    with open(ack_path, "a", encoding="utf-8") as acks:  # first: a kill while the store opens acknowledged nothing
        store = Store(path)
        ctx = Context(store, Actor(store.staff.get(staff_id), "crash-writer"), TODAY)
        n = 0
        while True:
            token = f"s{seed}-{n:05d}"
            acks.write(f"begin {token}\n")
            acks.flush()
            if n % 3 == 2:
                done = log_entry(ctx, rng.choice(patients), "symptom", "headache", on=f"-{rng.randrange(40)}",
                                 note=token)
                acks.write(f"entry {token} {done.entry.id}\n")
            else:
                imported = import_csv(ctx, batch_csv(token, patients, rng))
                acks.write(f"batch {token} {imported.rows}\n")
            acks.flush()
            n += 1


def steady_writer(path: str, staff_id: str, patient: str, seconds: float, ack_path: str) -> None:
    """Log symptoms for `seconds`, one ack line (entry id) per write that returned."""
    store = Store(path)
    ctx = Context(store, Actor(store.staff.get(staff_id), "steady-writer"), TODAY)
    deadline = time.monotonic() + seconds
    n = 0
    with open(ack_path, "w", encoding="utf-8") as acks:
        while time.monotonic() < deadline:
            done = log_entry(ctx, patient, "symptom", "tired", on=f"-{n % 30}", note=f"steady-{n}")
            acks.write(f"{done.entry.id}\n")
            acks.flush()
            n += 1
    store.close()
