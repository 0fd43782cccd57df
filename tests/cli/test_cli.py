"""The scriptable interface through click's runner: each command, each exit code, nothing written on refusal."""

from __future__ import annotations

import json
import sqlite3
from datetime import timedelta
from pathlib import Path

import pytest

from tests.application.test_alert_lifecycle import history_csv
from tests.cli.conftest import DATE_OF_RECORD


def counts(db: str) -> tuple[int, int, int]:
    conn = sqlite3.connect(db)
    try:
        return tuple(conn.execute(f"SELECT count(*) FROM {t}").fetchone()[0] for t in ("entry", "audit", "patient"))
    finally:
        conn.close()


@pytest.mark.parametrize(
    "kind, value",
    [
        ("bleed", "heavy"),
        ("temp", "36.72"),
        ("lh", "positive"),
        ("mucus", "creamy"),
        ("hcg", "153 mIU/mL"),
        ("scan", "18,16,12 endo 8.5"),
        ("med", "letrozole 2.5 mg"),
        ("trigger", "hCG 5000 IU"),
        ("insemination", "IUI"),
        ("intercourse", "yes"),
        ("symptom", "mild cramps"),
        ("note", "called back"),
    ],
)
def test_log_each_kind(clinic, kind, value):
    result = clinic("--as", "phil", "log", "P0001", kind, value)
    assert result.exit_code == 0, result.output
    assert "Logged entry" in result.output


@pytest.mark.parametrize(
    "args, fragment",
    [
        (("log", "P0001", "temp", "43.5"), "outside 34.0-42.0 C"),
        (("log", "P0001", "temp", "36.5", "--on", "2026-12-02"), "in the future"),
        (("log", "P0001", "temperature", "36.5"), "unknown kind"),
        (("log", "P0001", "bleed", "medium"), "use one of spotting"),
        (("log", "P9999", "temp", "36.5"), "no patient"),
        (("log", "P0001", "temp", "36.5", "--flag", "tired"), "does not apply"),
        (("log", "P0001", "bleed", "heavy", "--on", "1950-01-01"), "before P0001's date of birth"),
        (("--as", "phil", "amend", "1", "36.6", "--reason", "x"), "may not correct entries"),
        (("--as", "phil", "staff", "add", "x1", "--name", "X", "--role", "nurse"), "may not add staff"),
        (("void", "99", "--reason", "x"), "no entry"),
        (("patient", "add", "P0002", "--name", "Q", "--born", "2030-01-01"), "not plausible"),
        (("patient", "add", "P0100", "--name", "Baby Test", "--born", "2026-11-30"),
         "date of birth 2026-11-30 is not plausible: it gives age 0 on 2026-12-01, and a patient must be 12 to 60"),
        (("patient", "add", "P0100", "--name", "Old Test", "--born", "1901-01-01"), "it gives age 125 on 2026-12-01"),
        (("patient", "add", "p0001", "--name", "Other Caller", "--born", "1990-01-01"),
         "patient id p0001 is taken as P0001: ids are unique whatever their letter case; choose another"),
        (("log", "P0001", "temp", "36.7", "--on", "2020-01-01"),
         "day 2020-01-01 is more than 366 days before today (2026-12-01): log entries from 2025-11-30 on,"
         " and enter older history with 'caseload import FILE.csv'"),
    ],
)
def test_refusals_exit_1_with_one_line_and_write_nothing(clinic, args, fragment):
    clinic("log", "P0001", "temp", "36.40", "--on", "yesterday")
    before = counts(clinic.db)
    result = clinic(*args)
    assert result.exit_code == 1
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and fragment in lines[0]
    assert counts(clinic.db) == before


def test_an_id_typed_in_another_case_reaches_the_registered_patient(clinic):
    logged = clinic("--as", "phil", "log", "p0001", "temp", "36.72")
    assert logged.exit_code == 0, logged.output
    assert logged.output.startswith("Logged entry 1: P0001 temp 36.72")
    assert json.loads(clinic("show", "p0001", "--json").output)["patient"] == "P0001"
    assert [e["patient"] for e in json.loads(clinic("entries", "p0001", "--json").output)] == ["P0001"]
    assert clinic("patient", "set", "p0001", "--plan", "timed").output == "P0001: plan timed, status active, nurse nell.\n"


def test_older_history_goes_in_by_import(clinic, tmp_path):
    history = tmp_path / "history.csv"
    history.write_text("patient,day,kind,value\np0001,2020-01-01,bleed,heavy\nP0001,2020-01-02,bleed,moderate\n")
    done = clinic("import", str(history))
    assert done.exit_code == 0 and "Imported 2 entries for 1 patients" in done.output
    entries = json.loads(clinic("entries", "P0001", "--json").output)
    assert [(e["patient"], e["day"], e["value"]) for e in entries] == [("P0001", "2020-01-01", "heavy"),
                                                                     ("P0001", "2020-01-02", "moderate")]


def test_second_temperature_same_day_is_refused_unless_amended(clinic):
    assert clinic("log", "P0001", "temp", "36.40").exit_code == 0
    before = counts(clinic.db)
    again = clinic("log", "P0001", "temp", "36.45")
    assert again.exit_code == 1 and "already has a temperature" in again.stderr
    assert counts(clinic.db) == before
    fixed = clinic("amend", "1", "36.45", "--reason", "second reading was the right one")
    assert fixed.exit_code == 0
    entries = json.loads(clinic("entries", "P0001", "--json").output)
    assert [(e["number"], e["current"]) for e in entries] == [(36.4, False), (36.45, True)]


def test_usage_errors_exit_2(clinic):
    assert clinic("log", "P0001").exit_code == 2
    assert clinic("frobnicate").exit_code == 2


def test_unmapped_os_account_and_as_for_non_admins_are_refused(clinic, monkeypatch):
    monkeypatch.setattr("caseload.application.clinic.os_account", lambda: "stranger")
    result = clinic("list")
    assert result.exit_code == 1 and "not mapped" in result.stderr


def test_show_json_has_the_contract_keys(clinic):
    for day, flow in (("-30", "heavy"), ("-29", "moderate"), ("-2", "heavy"), ("-1", "light")):
        clinic("log", "P0001", "bleed", flow, "--on", day)
    data = json.loads(clinic("show", "P0001", "--json").output)
    for key in ("patient", "today", "cycle_day", "cycle_start", "cycles", "stats", "classification",
                "prediction", "thermal_shift", "pregnancy", "alerts"):
        assert key in data
    assert data["patient"] == "P0001"
    assert data["cycle_start"] == "2026-11-29" and data["cycle_day"] == 3
    assert data["cycles"][0] == {"start": "2026-11-01", "length": 28, "bleed_days": 2, "ovulation": None,
                                 "ovulation_method": None, "luteal_length": None, "dating_conflict": None,
                                 "open": False, "pregnancy": False}
    assert set(data["stats"]) >= {"count", "mean", "sd", "shortest", "longest", "variation"}
    assert set(data["classification"]) == {"frequency", "regularity", "duration"}
    assert set(data["prediction"]) >= {"ovulation", "ovulation_range", "fertile_window", "next_period",
                                       "next_period_range", "daily", "calendar_rule"}


def test_import_is_all_or_nothing_with_the_bad_line(clinic, tmp_path):
    good = tmp_path / "good.csv"
    good.write_text("patient,day,kind,value,time,flags,note\nP0001,-2,temp,36.41,06:30,,\nP0001,-1,temp,97.7F,06:40,late,\n")
    bad = tmp_path / "bad.csv"
    bad.write_text("patient,day,kind,value\nP0001,-4,temp,36.4\nP0001,-3,temp,51\n")
    before = counts(clinic.db)
    refused = clinic("import", str(bad))
    assert refused.exit_code == 1 and refused.stderr.startswith("caseload: line 3:")
    assert counts(clinic.db) == before
    done = clinic("import", str(good))
    assert done.exit_code == 0 and "Imported 2 entries" in done.output
    assert counts(clinic.db)[0] == before[0] + 2


def test_list_backup_and_check(clinic, tmp_path):
    assert "P0001" in clinic("list").output
    assert json.loads(clinic("list", "--json").output)[0]["patient"] == "P0001"
    assert clinic("backup", str(tmp_path / "b.db")).exit_code == 0
    check = clinic("check")
    assert check.exit_code == 0 and "integrity: ok" in check.output and "audit id gaps: none" in check.output


@pytest.mark.parametrize("zone", ["Mars/Base", "Europe/Londn", "", "../etc/passwd"])
def test_init_refuses_an_unknown_time_zone(run, zone):
    # IANA time zone database (tzdata): these names are not zones; nothing may be written.
    result = run("init", "--admin", "ada", "--name", "Ada Admin", "--timezone", zone)
    assert result.exit_code == 1
    assert len(result.stderr.strip().splitlines()) == 1 and "time zone" in result.stderr
    assert not Path(run.db).exists()


def test_init_accepts_a_known_time_zone(run):
    # IANA time zone database (tzdata): America/New_York is a zone.
    assert run("init", "--admin", "ada", "--name", "Ada Admin", "--timezone", "America/New_York").exit_code == 0


def test_check_recompute_throws_the_kept_cycles_away_and_finds_no_difference(clinic, tmp_path):
    history = tmp_path / "history.csv"
    history.write_bytes(history_csv("P0001", DATE_OF_RECORD - timedelta(days=5), 5))
    assert clinic("import", str(history)).exit_code == 0
    with sqlite3.connect(clinic.db) as conn:
        kept = conn.execute("SELECT count(*) FROM closed_cycle").fetchone()[0]
    assert kept == 6  # six 28-day cycles before the open one
    assert clinic("patient", "add", "P0002", "--name", "No Entries", "--born", "1990-01-01").exit_code == 0
    done = clinic("check", "--recompute")
    assert done.exit_code == 0 and "integrity: ok" in done.output
    assert "recomputed from every entry: 2 patients, 6 kept cycles replaced; differences: none" in done.output
