"""The demo caseload against the alert rules: on the build day each kind is raised for exactly the
patients built to raise it (seed_data/patients.csv, `expected_alerts`), and for no one else."""

from __future__ import annotations

import csv
from collections import Counter
from datetime import date

import pytest

from caseload.core.alerts import ALERT_KINDS
from caseload.core.model import AlertState
from caseload.application.demo import SEED_DIR
from caseload.application.recompute import refresh_all
from caseload.application.context import Context

PATIENTS_CSV = SEED_DIR / "patients.csv"
BUILD_DAY = date(2026, 12, 1)


def expected() -> dict[str, set[str]]:
    with PATIENTS_CSV.open(encoding="utf-8") as f:
        return {r["id"]: set(filter(None, r["expected_alerts"].split(";"))) for r in csv.DictReader(f)}


def raised(demo) -> dict[str, set[str]]:
    found: dict[str, set[str]] = {}
    for a in demo.store.alerts.all():
        if a.state is not AlertState.RESOLVED:
            found.setdefault(a.kind, set()).add(a.patient_id)
    return found


@pytest.mark.parametrize("kind", ALERT_KINDS)
def test_each_kind_is_raised_for_exactly_the_patients_built_for_it(demo, kind):
    wanted = {pid for pid, kinds in expected().items() if kind in kinds}
    assert wanted, f"the demo builds no patient for {kind}"
    assert raised(demo).get(kind, set()) == wanted


def test_the_counts_per_kind(demo):
    counts = Counter({kind: len(pids) for kind, pids in raised(demo).items()})
    assert counts == Counter(k for kinds in expected().values() for k in kinds)
    assert set(counts) == set(ALERT_KINDS)


def test_quiet_patients_raise_nothing(demo):
    quiet = {pid for pid, kinds in expected().items() if not kinds}
    flagged = set().union(*raised(demo).values())
    assert len(quiet) >= 20 and not quiet & flagged


def test_a_second_refresh_of_the_demo_changes_nothing(demo):
    rows, audits = demo.store.alerts.count(), demo.store.audit.count()
    report = refresh_all(Context(demo.store, demo.admin, BUILD_DAY))
    assert (report.raised, report.resolved) == (0, 0)
    assert demo.store.alerts.count() == rows and demo.store.audit.count() == audits
