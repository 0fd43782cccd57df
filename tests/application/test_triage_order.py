"""Triage order on a real store: most severe first, and within a severity clinical risk (bleeding,
hCG, fever, a missed period) before routine timing; a row shows its most pressing alert, never
merely the latest, and counts the rest. The command line lists exactly the interface's order."""

from __future__ import annotations

import json
from datetime import timedelta

import pytest
from click.testing import CliRunner

from caseload.cli import main
from caseload.core.alerts import ALERT_KINDS, Candidate
from caseload.core.alerts.base import RISK_ORDER
from caseload.core.model import Role, Severity
from caseload.application.caseload_view import list_caseload
from caseload.application.patients import add_patient
from tests.conftest import TODAY

YESTERDAY = TODAY - timedelta(days=1)

# (patient, kind, severity, due) in the order they were raised: later ids for later alerts.
RAISED = [
    ("P0018", "window-open", Severity.TODAY, TODAY),  # the row once showed this...
    ("P0018", "prolonged-bleeding", Severity.TODAY, TODAY),  # ...and hid 11 days of bleeding behind "+1"
    ("P0002", "window-open", Severity.TODAY, YESTERDAY),  # due earlier, but timing, not risk
    ("P0003", "fever", Severity.TODAY, TODAY),
    ("P0004", "period-overdue", Severity.TODAY, TODAY),
    ("P0005", "window-approaching", Severity.SOON, YESTERDAY),
    ("P0006", "intermenstrual-bleeding", Severity.SOON, TODAY),
    ("P0007", "hcg-rise-low", Severity.URGENT, TODAY),
    ("P0007", "bleeding-in-pregnancy", Severity.URGENT, TODAY),
    ("P0008", "logging-gap", Severity.INFO, YESTERDAY),
    ("P0009", "no-thermal-shift", Severity.TODAY, TODAY),  # escalated to today: still a finding, not a risk
    ("P0009", "window-open", Severity.TODAY, YESTERDAY),
]
# Clinical risk within a severity is common practice: what may harm her now before what is routine.
EXPECTED_ORDER = ["P0007", "P0003", "P0018", "P0004", "P0009", "P0002", "P0006", "P0005", "P0008", "P0001"]
EXPECTED_TOP = {"P0018": "prolonged-bleeding", "P0007": "bleeding-in-pregnancy", "P0009": "no-thermal-shift"}


@pytest.fixture
def triage(store, as_role):
    nurse = as_role(Role.NURSE)
    for n in range(1, 10):
        add_patient(nurse, f"P00{n:02d}", f"Patient {n}", "1990-01-01", nurse="nurse1")
    add_patient(nurse, "P0018", "Siobhan Test", "1990-01-01", nurse="nurse1")
    with store.atomic(YESTERDAY):
        for pid, kind, severity, due in RAISED:
            candidate = Candidate(pid, kind, f"{pid}:{kind}:c1", severity, due, f"{kind} for {pid}", {}, "rule", "test")
            store.alerts.raise_alert(nurse.actor, candidate, YESTERDAY)
    return as_role(Role.SUPERVISOR)


def test_every_kind_has_one_place_in_the_risk_order():
    assert sorted(k.value for k in RISK_ORDER) == sorted(ALERT_KINDS)


def test_within_a_severity_clinical_risk_comes_before_timing(triage):
    lines = list_caseload(triage)
    assert [line.patient.id for line in lines] == EXPECTED_ORDER


def test_a_row_shows_its_most_pressing_alert_and_counts_the_rest(triage):
    by_id = {line.patient.id: line for line in list_caseload(triage)}
    for pid, kind in EXPECTED_TOP.items():
        assert by_id[pid].top_alert.kind == kind
        assert len(by_id[pid].alerts) == 2
    # The record lists every kind, in the same order.
    assert [a.kind for a in by_id["P0018"].alerts] == ["prolonged-bleeding", "window-open"]


def test_the_command_line_lists_the_same_order_and_words(triage, store):
    runner = CliRunner()
    args = ["--db", str(store.path), "--as", "super1", "--today", TODAY.isoformat()]
    rows = json.loads(runner.invoke(main, [*args, "list", "--json"], obj=TODAY).output)
    assert [r["patient"] for r in rows] == EXPECTED_ORDER
    assert rows[2]["top_alert"]["kind"] == "prolonged-bleeding" and rows[2]["more_alerts"] == 1
    text = runner.invoke(main, [*args, "list"], obj=TODAY, terminal_width=160).output
    assert "today long bleed +1 more" in text
    assert text.index("P0018") < text.index("P0002")


def test_a_save_that_raises_a_timing_alert_keeps_the_row_on_the_risk(as_role, patient, store):
    """The row rebuilt after a save (no store read) follows the same rule: the newest alert does not
    take the row from a more pressing one."""
    from dataclasses import replace

    from caseload.application.caseload_view import row_after
    from caseload.application.entries import log_entry

    phone = as_role(Role.PHONE)
    log_entry(phone, patient.id, "temp", "38.4", on="yesterday", at="06:40")  # a fever: 38.0 C or more
    [line] = [x for x in list_caseload(as_role(Role.NURSE)) if x.patient.id == patient.id]
    assert line.top_alert.kind == "fever"
    done = log_entry(phone, patient.id, "lh", "positive")
    with store.atomic(TODAY):  # the window this save opened, raised after the fever
        window = store.alerts.raise_alert(phone.actor, Candidate(
            patient.id, "window-open", f"{patient.id}:window-open:c1", Severity.TODAY, YESTERDAY, "open", {}, "r", "s"),
            TODAY)  # due a day earlier than the fever: timing still comes after the risk
    after = row_after(line, replace(done.refreshed, raised=(window,)), TODAY)
    assert [a.kind for a in after.alerts] == ["fever", "window-open"]
