"""`caseload summary` through click's runner: exit codes, one-line refusals, nothing written on refusal."""

from __future__ import annotations

import json
from datetime import date

import pytest
from click.testing import CliRunner

from caseload.cli import main


@pytest.fixture
def run(fresh_clinic):
    runner = CliRunner()

    def invoke(*args):
        return runner.invoke(main, ["--db", str(fresh_clinic.store.path), "--today", "2026-11-10", *args],
                             catch_exceptions=False, obj=date(2026, 11, 10))

    return invoke


def test_summary_writes_the_week_and_says_where(run, fresh_clinic, tmp_path):
    out = tmp_path / "w43.json"
    done = run("summary", "--week", "2026-w43", "--format", "json", "--out", str(out), "--deidentify")
    assert done.exit_code == 0, done.output
    assert done.output.strip() == f"Weekly summary 2026-W43 written to {out} (de-identified json)."
    doc = json.loads(out.read_text())
    assert doc["deidentified"] is True and doc["alerts"]["raised"]["total"]["total"] == 11
    (row,) = fresh_clinic.store.audit.rows("summary.export")
    assert row.by_staff == "admin1"


def test_a_phone_line_identity_is_refused_with_exit_1_and_nothing_written(run, fresh_clinic, tmp_path):
    out = tmp_path / "w43.xlsx"
    audit_rows = fresh_clinic.store.audit.count()
    done = run("--as", "phone1", "summary", "--week", "2026-W43", "--format", "xlsx", "--out", str(out))
    assert done.exit_code == 1
    assert done.output.strip() == (
        "caseload: phone staff may not export the weekly summary: it needs supervisor or admin")
    assert not out.exists() and fresh_clinic.store.audit.count() == audit_rows


def test_a_bad_week_is_refused_in_one_line(run, tmp_path):
    done = run("summary", "--week", "2026-48", "--format", "csv", "--out", str(tmp_path / "csv"))
    assert done.exit_code == 1
    assert done.output == "caseload: week '2026-48' not understood: use YYYY-Www, e.g. 2026-W48\n"
    assert not (tmp_path / "csv").exists()


def test_an_unknown_format_is_a_usage_error(run, tmp_path):
    done = run("summary", "--week", "2026-W43", "--format", "pdf", "--out", str(tmp_path / "w.pdf"))
    assert done.exit_code == 2
    assert not (tmp_path / "w.pdf").exists()


def test_without_a_week_the_last_complete_one_is_summarised(run, tmp_path):
    # Tuesday 10 Nov 2026 is in ISO week 46 (dateutil/ISO 8601: week 1 holds 4 January); W45 is the last complete.
    out = tmp_path / "last.json"
    done = run("summary", "--format", "json", "--out", str(out))
    assert done.exit_code == 0, done.output
    doc = json.loads(out.read_text())
    assert doc["week"]["label"] == "2026-W45" and doc["complete"] is True


def test_a_week_in_progress_says_so(run, tmp_path):
    out = tmp_path / "now.html"
    done = run("summary", "--week", "2026-W46", "--format", "html", "--out", str(out))
    assert done.exit_code == 0, done.output
    assert "WEEK IN PROGRESS: figures up to 2026-11-10 only" in out.read_text(encoding="utf-8")


def test_de_identified_alert_lists_carry_no_names(run, fresh_clinic, tmp_path):
    out = tmp_path / "w43.json"
    assert run("summary", "--week", "2026-W43", "--format", "json", "--out", str(out), "--deidentify").exit_code == 0
    doc = json.loads(out.read_text())
    listed = doc["alerts"]["open_at_end"]["rows"] + doc["alerts"]["urgent_notes"]["rows"]
    assert listed and all(r["patient"].startswith("px-") and "name" not in r for r in listed)


@pytest.mark.parametrize("week, message", [
    ("", "week '' not understood: use YYYY-Www, e.g. 2026-W48"),  # typed empty: not the default week
    ("0000-W01", "week '0000-W01' does not exist: years run from 0001 to 9999"),
    ("2026-W4\uff18", "week '2026-W4\uff18' not understood: use YYYY-Www, e.g. 2026-W48"),
    ("9999-W52", "week 9999-W52 starts on 9999-12-27, after today (2026-11-10): choose a week that has begun"),
])
def test_a_week_that_cannot_be_summarised_is_one_line_and_nothing_is_written(run, fresh_clinic, tmp_path, week,
                                                                            message):
    out = tmp_path / "w.json"
    done = run("summary", "--week", week, "--format", "json", "--out", str(out))
    assert done.exit_code == 1
    assert done.output == f"caseload: {message}\n"
    assert not out.exists() and not fresh_clinic.store.audit.rows("summary.export")
