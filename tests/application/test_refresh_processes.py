"""A large caseload's refresh is computed by several processes at once: it must plan exactly what
one process plans, and write the same."""

from __future__ import annotations

from datetime import timedelta

from caseload.application import recompute
from caseload.application.context import Context
from caseload.application.protocol import load_protocol
from caseload.application.recompute import plan_refresh, write_refresh
from tests.conftest import TODAY


def _in_processes(monkeypatch, share: int) -> None:
    """Any caseload is computed by two processes, in shares of `share` patients."""
    monkeypatch.setattr(recompute, "PARALLEL_FROM_PATIENTS", 1)
    monkeypatch.setattr(recompute, "SHARE_PATIENTS", share)
    monkeypatch.setattr(recompute, "_processors", lambda: 2)


def test_several_processes_plan_what_one_plans_and_write_it(demo, monkeypatch):
    # Five days on, every patient's cycle day moved: each one has a snapshot to write.
    ctx = Context(demo.store, demo.admin, TODAY + timedelta(days=5), load_protocol(demo.store))
    alone = plan_refresh(ctx)
    assert len(alone.work) == demo.patients
    _in_processes(monkeypatch, share=7)  # shares that do not divide the caseload
    together = plan_refresh(ctx)
    assert together == alone  # every patient, in order: snapshot, alert plan, cycles to keep, mark
    report = write_refresh(ctx, together)
    assert report.patients == demo.patients
    assert plan_refresh(ctx).work == ()  # written: nothing is left to write on that day


def test_progress_counts_every_patient_computed_elsewhere(demo, monkeypatch):
    ctx = Context(demo.store, demo.admin, TODAY + timedelta(days=9), load_protocol(demo.store))
    _in_processes(monkeypatch, share=10)
    seen: list[tuple[str, int, int]] = []
    plan_refresh(ctx, lambda stage, done, total: seen.append((stage, done, total)))
    assert [done for _, done, _ in seen] == list(range(1, demo.patients + 1))
    assert {(stage, total) for stage, _, total in seen} == {("computed", demo.patients)}
