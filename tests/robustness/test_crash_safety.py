"""Power cuts: a writer killed with SIGKILL at random moments, many times, leaves a whole store behind."""

from __future__ import annotations

import multiprocessing
import os
import random
import signal
import sqlite3
import time
from collections import Counter
from pathlib import Path

from caseload.core.model import Role
from caseload.application.patients import add_patient
from caseload.store import Store
from tests.robustness.robust_support import BATCH_ROWS, audit_mismatches, crash_writer, integrity

KILLS = 20
PATIENTS = ("C01", "C02", "C03")


def read_acks(path: Path) -> tuple[dict[str, int], dict[str, int], str | None]:
    """(acknowledged batches: token -> rows, acknowledged entries: token -> id, the call cut short)."""
    batches, entries, open_call = {}, {}, None
    for line in path.read_text(encoding="utf-8").splitlines(keepends=True):
        if not line.endswith("\n"):
            break  # the kill cut this line short: never acknowledged
        word, token, *rest = line.split()
        if word == "begin":
            open_call = token
        elif word == "batch":
            batches[token], open_call = int(rest[0]), None
        else:
            entries[token], open_call = int(rest[0]), None
    return batches, entries, open_call


def check_after_kill(path: Path, acks: Path) -> tuple[int, bool]:
    """Everything acknowledged is there once, nothing is half there; (writes acknowledged, kill cut a call)."""
    with Store(path) as store:  # opening replays or discards the write-ahead log
        assert store.db.version >= 1
    assert integrity(path) == ["ok"]
    assert audit_mismatches(path) == 0
    batches, entries, open_call = read_acks(acks)
    conn = sqlite3.connect(path)
    try:
        rows = conn.execute("SELECT id, note FROM entry WHERE note LIKE 's%'").fetchall()
    finally:
        conn.close()
    per_batch = Counter(note.rsplit("-", 1)[0] for _, note in rows if note.count("-") == 2)
    singles = Counter(note for _, note in rows if note.count("-") == 1)
    assert all(n == BATCH_ROWS for n in per_batch.values()), "a batch import is half written"
    assert all(per_batch[t] == n for t, n in batches.items()), "an acknowledged import is missing"
    assert all(n == 1 for n in singles.values())
    by_note = {note: i for i, note in rows}
    assert all(by_note.get(t) == i for t, i in entries.items()), "an acknowledged entry is missing"
    return len(batches) + len(entries), open_call is not None


def test_sigkill_during_writes_loses_nothing_acknowledged(store, as_role, tmp_path):
    for pid in PATIENTS:
        add_patient(as_role(Role.NURSE), pid, f"Crash {pid}", "1990-03-03")
    staff_id = as_role(Role.NURSE).actor.id
    store.close()
    fork = multiprocessing.get_context("fork")
    rng = random.Random(20261201)
    acked = cut_short = 0
    for kill in range(KILLS):
        acks = tmp_path / f"acks-{kill}.txt"
        proc = fork.Process(target=crash_writer, args=(str(store.path), staff_id, PATIENTS, str(acks), kill))
        proc.start()
        time.sleep(rng.uniform(0.1, 0.45))
        os.kill(proc.pid, signal.SIGKILL)
        proc.join()
        assert proc.exitcode == -signal.SIGKILL
        writes, cut = check_after_kill(store.path, acks)
        acked, cut_short = acked + writes, cut_short + cut
    assert acked > KILLS  # the writers did get work done between kills
    assert cut_short >= KILLS // 2  # most kills landed inside a call, not between two
