"""The morning refresh in its own process or worker thread: a clerk's log goes through while it runs,
two at once raise each alert once, and a refresh killed with SIGKILL leaves every patient either
refreshed or as she was, her alerts in step."""

from __future__ import annotations

import multiprocessing
import os
import signal
import threading
import time
from datetime import timedelta
from pathlib import Path

import pytest

from caseload.core.analysis import analyse
from caseload.core.model import Actor, Role
from caseload.core.snapshot import snapshot_of
from caseload.application import recompute
from caseload.application.alert_sync import plan_alerts
from caseload.application.context import Context
from caseload.application.csv_import import import_csv
from caseload.application.entries import log_entry
from caseload.application.morning_refresh import run_morning_refresh
from caseload.application.patients import add_patient
from caseload.application.protocol import load_protocol
from caseload.application.staff import add_staff, init_store
from caseload.store import Store
from tests.application.test_alert_lifecycle import history_csv
from tests.robustness.conftest import TODAY

PATIENTS = [f"R{n:03d}" for n in range(1, 25)]
# Three days after the last entries: every patient's snapshot moves, a logging gap is raised and
# the window approaching hands over to the window open (two alerts raised per patient).
MORNING = TODAY + timedelta(days=3)
PAUSE_S = 0.25  # the test hook: the refresh sleeps after each batch it writes, outside any transaction


@pytest.fixture
def caseload(tmp_path) -> Path:
    path = tmp_path / "clinic.db"
    with Store(path) as store:
        admin = init_store(store, "ada", "Ada Admin", "tester")
        ctx = Context(store, admin, TODAY, load_protocol(store))
        add_staff(ctx, "nell", "Nell Nurse", "nurse")
        add_staff(ctx, "phil", "Phil Phone", "phone")
        for pid in PATIENTS:
            add_patient(ctx, pid, f"Patient {pid}", "1990-03-04", nurse="nell")
            import_csv(ctx, history_csv(pid, TODAY - timedelta(days=5), 5))
    return path


def actor(store: Store, staff_id: str) -> Actor:
    return Actor(store.staff.get(staff_id), "tester")


def slow_refresh(path: str, flag: str) -> None:
    """A whole-caseload refresh as its own process, two patients per transaction, pausing between."""
    recompute.BATCH_PATIENTS = 2

    def progress(stage: str, done: int, total: int) -> None:
        if stage == "written":
            Path(flag).write_text(f"{done} {total}")
            time.sleep(PAUSE_S)

    with Store(path) as store:
        recompute.refresh_all(Context(store, actor(store, "ada"), MORNING, load_protocol(store)), progress)


def start_refresh(path: Path, tmp_path: Path, name: str = "written") -> tuple[multiprocessing.Process, Path]:
    flag = tmp_path / name
    proc = multiprocessing.get_context("fork").Process(target=slow_refresh, args=(str(path), str(flag)))
    proc.start()
    return proc, flag


def written(flag: Path, at_least: int, proc: multiprocessing.Process) -> None:
    """Poll until the refresh has written `at_least` patients."""
    while not (flag.exists() and flag.read_text() and int(flag.read_text().split()[0]) >= at_least):
        assert proc.is_alive(), "the refresh ended before the test could act"
        time.sleep(0.01)


def fresh(store: Store, pid: str):
    """What a refresh on MORNING computes for the patient now: her snapshot and the alert changes."""
    ctx = Context(store, actor(store, "ada"), MORNING, load_protocol(store))
    patient, seen = store.patients.get(pid), store.entries.observations_for(pid)
    analysis = analyse(patient, seen, MORNING, ctx.protocol)
    return snapshot_of(analysis).to_dict(), plan_alerts(ctx, patient, analysis, seen)


def test_a_log_during_a_refresh_in_another_process_goes_through_and_is_kept(caseload, tmp_path):
    proc, flag = start_refresh(caseload, tmp_path)
    try:
        written(flag, 2, proc)
        with Store(caseload) as store:
            clerk = Context(store, actor(store, "phil"), TODAY, load_protocol(store))
            done = log_entry(clerk, PATIENTS[-1], "temp", "36.55", on="today", at="06:45")
            assert done.entry.id is not None
            assert proc.is_alive()  # the log went through while the refresh was still running
    finally:
        proc.join(60)
    assert proc.exitcode == 0
    with Store(caseload) as store:
        # The refresh saw the patient change after its compute and recomputed her inside its write.
        snapshot, plan = fresh(store, PATIENTS[-1])
        assert store.state.all()[PATIENTS[-1]].to_dict() == snapshot and plan.empty
        kept = store.state.all()[PATIENTS[-1]]
        assert (kept.last_entry_day, kept.computed_on) == (TODAY, MORNING)


def test_a_refresh_killed_half_way_leaves_every_patient_refreshed_or_as_she_was(caseload, tmp_path):
    with Store(caseload) as store:
        before = {pid: (store.state.all()[pid].to_dict(), store.alerts.for_patient(pid)) for pid in PATIENTS}
    proc, flag = start_refresh(caseload, tmp_path)
    written(flag, 6, proc)
    os.kill(proc.pid, signal.SIGKILL)
    proc.join(10)
    refreshed = 0
    with Store(caseload) as store:
        for pid in PATIENTS:
            snapshot, plan = fresh(store, pid)
            now = (store.state.all()[pid].to_dict(), store.alerts.for_patient(pid))
            if now[0] == snapshot:
                refreshed += 1
                assert plan.empty, pid  # her alerts were written with her snapshot
            else:
                assert now == before[pid], pid  # untouched: snapshot and alerts as they were
        live = store.db.conn.execute(
            "SELECT key FROM alert WHERE state != 'resolved' GROUP BY key HAVING count(*) > 1").fetchall()
        assert live == []
        assert 6 <= refreshed < len(PATIENTS)
        again = recompute.refresh_all(Context(store, actor(store, "ada"), MORNING, load_protocol(store)))
        # The rest get their logging gap and their window open now, once.
        assert again.raised == 2 * (len(PATIENTS) - refreshed)


def test_two_refreshes_at_once_raise_each_alert_once(caseload, tmp_path):
    first, _ = start_refresh(caseload, tmp_path, "first")
    second, _ = start_refresh(caseload, tmp_path, "second")
    for proc in (first, second):
        proc.join(60)
        assert proc.exitcode == 0
    with Store(caseload) as store:
        gaps = [a.patient_id for a in store.alerts.all() if a.kind == "logging-gap"]
        assert sorted(gaps) == PATIENTS  # one each, though both refreshes computed one for everyone
        opened = [a.patient_id for a in store.alerts.all() if a.kind == "window-open"]
        assert sorted(opened) == PATIENTS
        for pid in PATIENTS:
            assert fresh(store, pid)[0] == store.state.all()[pid].to_dict()


def test_the_interface_refresh_in_a_worker_thread_leaves_its_own_connection_free(caseload):
    stages: list[tuple[str, int, int]] = []

    def progress(stage: str, done: int, total: int) -> None:
        stages.append((stage, done, total))
        if stage == "written":
            time.sleep(PAUSE_S)

    with Store(caseload) as store:
        ada = actor(store, "ada")
        worker = threading.Thread(target=run_morning_refresh, args=(caseload, ada, MORNING, progress))
        worker.start()
        try:
            while not any(s[0] == "written" for s in stages):
                assert worker.is_alive()
                time.sleep(0.01)
            clerk = Context(store, actor(store, "phil"), TODAY, load_protocol(store))
            assert log_entry(clerk, PATIENTS[0], "temp", "36.50", on="today", at="06:50").entry.id is not None
            assert worker.is_alive()  # logged on the interface's connection while the refresh ran
        finally:
            worker.join(60)
    assert stages[-1] == ("written", len(PATIENTS), len(PATIENTS))
    assert ("computed", len(PATIENTS), len(PATIENTS)) in stages
