"""The committed demo seed files: reproducible, well formed, and each scenario shows what it claims."""

from __future__ import annotations

import csv
import json
import re
from datetime import date, timedelta
from pathlib import Path

import pytest

from caseload.core.model import MUCUS_SCALE, Flow, Kind, PatientStatus, Plan, Role
from caseload.core.parse import parse_entry
from tools.sim.demo_caseload import ALERT_KINDS
from tools.sim.write_seed import DEFAULT_DIR, main, write_seed
from tests.tools.sim.chart_rules import (
    bleed_lengths,
    bleed_starts,
    celsius,
    cycles,
    load_rows,
    longest_silence,
    readings,
    three_over_six,
)

FILES = ("clinic.json", "staff.csv", "patients.csv", "entries.csv")
VALUE_FORMATS = {
    "temp": r"\d{2}\.\d{2}|\d{2,3}\.\dF",
    "bleed": "|".join(f.value for f in Flow),
    "lh": "positive|negative",
    "mucus": "|".join(MUCUS_SCALE),
    "hcg": r"positive|negative|\d+",
    "scan": r"\d+(\.5)?(,\d+(\.5)?)* endo \d+(\.\d)?",
}


def _csv(name: str) -> list[dict[str, str]]:
    with (DEFAULT_DIR / name).open(encoding="utf-8") as f:
        return list(csv.DictReader(f))


PATIENTS = {p["id"]: p for p in _csv("patients.csv")}
STAFF = {s["id"]: s for s in _csv("staff.csv")}
ROWS = load_rows(DEFAULT_DIR / "entries.csv")
ALERTING = {pid for pid, p in PATIENTS.items() if p["status"] in ("active", "pregnant")}


def expecting(kind: str) -> set[str]:
    return {pid for pid, p in PATIENTS.items() if kind in p["expected_alerts"].split(";")}


def test_committed_seed_equals_a_fresh_generation(tmp_path: Path):
    write_seed(tmp_path)
    for name in FILES:
        assert (tmp_path / name).read_bytes() == (DEFAULT_DIR / name).read_bytes(), name


def test_write_seed_command_takes_at_most_one_directory(tmp_path: Path, capsys):
    assert main([str(tmp_path), "extra"]) == 2
    assert "usage" in capsys.readouterr().err
    assert main([str(tmp_path)]) == 0 and (tmp_path / "entries.csv").exists()


def test_clinic_and_staff():
    clinic = json.loads((DEFAULT_DIR / "clinic.json").read_text(encoding="utf-8"))
    assert set(clinic) == {"name", "timezone", "demo_admin"}
    assert STAFF[clinic["demo_admin"]]["role"] == "admin"
    roles = [s["role"] for s in STAFF.values()]
    assert roles.count("nurse") >= 2 and {"phone", "supervisor", "admin"} <= set(roles)
    assert set(roles) <= {r.value for r in Role}
    assert all(re.fullmatch(r"[a-z][a-z.-]*", sid) for sid in STAFF)


def test_patients_file():
    assert 38 <= len(PATIENTS) <= 45
    assert list(PATIENTS) == [f"P{i:04d}" for i in range(1, len(PATIENTS) + 1)]
    for p in PATIENTS.values():
        assert p["status"] in {s.value for s in PatientStatus} and p["plan"] in {x.value for x in Plan}
        assert STAFF[p["nurse"]]["role"] == "nurse"
        assert int(p["born_offset"]) < -18 * 365 and int(p["created_offset"]) < 0
        assert p["charting_temps"] in ("0", "1") and p["scenario"]
        assert set(filter(None, p["expected_alerts"].split(";"))) <= set(ALERT_KINDS)
    assert {k for p in PATIENTS.values() for k in p["expected_alerts"].split(";") if k} == set(ALERT_KINDS)
    assert sum(not p["expected_alerts"] for p in PATIENTS.values()) >= 20, "most patients are quiet"


def test_entry_rows_are_well_formed():
    with (DEFAULT_DIR / "entries.csv").open(encoding="utf-8") as f:
        raw = list(csv.DictReader(f))
    seen: set[tuple[str, str, str]] = set()
    for r in raw:
        assert r["patient"] in PATIENTS and r["kind"] in {k.value for k in Kind}
        assert int(r["day_offset"]) <= 0, "no entry after the build day"
        assert int(r["day_offset"]) > int(PATIENTS[r["patient"]]["created_offset"])
        pattern = VALUE_FORMATS.get(r["kind"])
        assert re.fullmatch(pattern, r["value"]) if pattern else r["value"].strip(), r
        assert STAFF[r["by"]]["role"] in ("phone", "nurse")
        if r["kind"] == "temp":
            assert re.fullmatch(r"([01]\d|2[0-3]):[0-5]\d", r["time"])
        if r["amend_reason"]:
            assert (r["patient"], r["day_offset"], r["kind"]) in seen, "a correction supersedes an earlier row"
            assert STAFF[r["by"]]["role"] == "nurse", "nurses amend entries"
        seen.add((r["patient"], r["day_offset"], r["kind"]))
    assert any(r["amend_reason"] and r["kind"] == "temp" for r in raw)
    assert any(r["void_reason"] for r in raw)


def test_every_entry_is_accepted_by_the_entry_parser():
    today = date(2026, 1, 15)
    with (DEFAULT_DIR / "entries.csv").open(encoding="utf-8") as f:
        for r in csv.DictReader(f):
            day = today + timedelta(days=int(r["day_offset"]))
            flags = r["flags"].split(";") if r["flags"] else ()
            parsed = parse_entry(r["kind"], r["value"], today, day.isoformat(), r["time"] or None, flags, r["note"])
            assert parsed.day == day


def _only(kind: str, patients: set[str]) -> None:
    assert patients & ALERTING == expecting(kind), kind


def test_fever_only_where_expected():
    # A reading of 38.0 C or more is a fever (common practice); the fever patient's is in the last 2 days.
    fevers = {pid for pid, rows in ROWS.items() if any(r.kind == "temp" and celsius(r.value) >= 38.0 for r in rows)}
    _only("fever", fevers)
    for pid in expecting("fever"):
        assert any(r.kind == "temp" and celsius(r.value) >= 38.0 and r.day >= -1 for r in ROWS[pid])


def test_prolonged_bleeding_only_where_expected():
    # FIGO 2018: flow lasting more than 8 days is prolonged.
    _only("prolonged-bleeding", {pid for pid, rows in ROWS.items() if max(bleed_lengths(rows)) > 8})
    for pid in expecting("prolonged-bleeding"):
        assert any(r.kind == "bleed" and r.day == 0 and r.value != "spotting" for r in ROWS[pid])


def test_logging_gap_only_where_expected():
    _only("logging-gap", {pid for pid, rows in ROWS.items() if longest_silence(rows) >= 3})
    quiet = ALERTING - expecting("logging-gap")
    assert max(longest_silence(ROWS[pid]) for pid in quiet) <= 1


def test_amenorrhoea_only_where_expected():
    # No bleed for 90 days or more (FIGO 2018 frequency category; 90 days from memory).
    silent = {pid for pid, rows in ROWS.items() if -bleed_starts(rows)[-1] >= 90}
    _only("amenorrhoea", silent - {p for p in PATIENTS if PATIENTS[p]["status"] == "pregnant"})


def _completed(pid: str) -> list[tuple[int, int]]:
    return cycles(ROWS[pid])[:-1]


def test_irregular_cycles_only_where_expected():
    # FIGO 2018: normal length 24-38 days; shortest-to-longest variation up to 7-9 days.
    irregular = set()
    for pid in PATIENTS:
        lengths = [e - s + 1 for s, e in _completed(pid)]
        if len(lengths) >= 3 and (max(lengths) - min(lengths) > 7 or min(lengths) < 24 or max(lengths) > 38):
            irregular.add(pid)
    _only("irregular-cycles", irregular)
    for pid in expecting("irregular-cycles"):
        lengths = [e - s + 1 for s, e in _completed(pid)]
        assert max(lengths) - min(lengths) > 9


def _charting(pid: str) -> bool:
    return PATIENTS[pid]["charting_temps"] == "1"


def test_monophasic_cycle_only_where_expected():
    monophasic = set()
    for pid in filter(_charting, PATIENTS):
        for s, e in _completed(pid):
            temps = readings(ROWS[pid], s, e)
            if len(temps) >= 0.7 * (e - s + 1) and three_over_six(temps) is None:
                monophasic.add(pid)
    _only("monophasic-cycle", monophasic)


def test_short_luteal_phase_only_where_expected():
    # ASRM 2021: a luteal phase of 10 days or fewer is short; ovulation taken as the day before the first high.
    short = set()
    for pid in filter(_charting, PATIENTS):
        for s, e in _completed(pid):
            shift = three_over_six(readings(ROWS[pid], s, e))
            if shift is not None and e - shift.first_high + 1 <= 10:
                short.add(pid)
            elif shift is not None:
                assert e - shift.first_high + 1 >= 12, (pid, s)
    _only("short-luteal-phase", short)


def _current(pid: str):
    start, _ = cycles(ROWS[pid])[-1]
    return start, 1 - start, three_over_six(readings(ROWS[pid], start, 0))


def test_quiet_patients_sit_where_no_window_or_thermal_rule_fires():
    """Day 1-2 of a new cycle, or a confirmed rise well before the next period is due."""
    window = expecting("window-open") | expecting("window-approaching") | expecting("no-thermal-shift")
    late = expecting("period-overdue") | expecting("sustained-high-temps") | expecting("amenorrhoea")
    for pid in sorted(ALERTING - window - late):
        start, cycle_day, shift = _current(pid)
        if cycle_day > 2:
            assert _charting(pid) and shift is not None, pid
            if PATIENTS[pid]["status"] == "pregnant":
                assert any(r.kind == "hcg" and r.value == "positive" and r.day >= start for r in ROWS[pid])
            else:
                assert cycle_day <= shift.first_high - start + 11, pid
            assert not any(r.kind == "lh" and r.value == "positive" and r.day > shift.confirmed_on for r in ROWS[pid])


def test_window_and_no_shift_patients_have_no_rise_this_cycle():
    for pid in expecting("window-open") | expecting("window-approaching") | expecting("no-thermal-shift"):
        assert _current(pid)[2] is None, pid
    (approaching,) = expecting("window-approaching")
    assert _current(approaching)[1] == 8
    assert all(29 <= e - s + 1 <= 35 for s, e in _completed(approaching))
    (no_shift,) = expecting("no-thermal-shift")
    start, cycle_day, _ = _current(no_shift)
    assert cycle_day == 24 and len(readings(ROWS[no_shift], start, 0)) >= 0.7 * cycle_day


def test_lh_surge_today_is_the_first_positive_of_the_cycle():
    surges = set()
    for pid in ALERTING:
        start, _, shift = _current(pid)
        positives = [r.day for r in ROWS[pid] if r.kind == "lh" and r.value == "positive" and r.day >= start]
        if positives and shift is None:
            surges.add(pid)
            assert positives == [0], pid
    assert surges and surges <= expecting("window-open")


def test_overdue_and_sustained_high_patients():
    for pid in expecting("period-overdue") & expecting("sustained-high-temps"):
        start, cycle_day, shift = _current(pid)
        above = [t for d, t in readings(ROWS[pid], shift.first_high, 0) if t > shift.coverline]
        assert len(above) >= 18 and cycle_day - (shift.confirmed_on - start + 1) > 17
    for pid in expecting("period-overdue") - expecting("sustained-high-temps") - expecting("amenorrhoea"):
        start, _, shift = _current(pid)
        assert -shift.confirmed_on > 17, "shift confirmed more than 17 days ago (ASRM 2021 luteal maximum)"
        assert not any(r.kind == "hcg" and r.day >= start for r in ROWS[pid])
        last = [t for _, t in readings(ROWS[pid], start, 0)][-3:]
        assert all(t <= shift.coverline for t in last), "readings fell back"
    for pid in ALERTING - expecting("sustained-high-temps"):
        start, _, shift = _current(pid)
        if shift is not None:
            above = [d for d, t in readings(ROWS[pid], shift.first_high, 0) if t > shift.coverline]
            assert len(above) < 18, pid


def _serum(pid: str) -> list[tuple[int, float]]:
    return [(r.day, float(r.value)) for r in ROWS[pid] if r.kind == "hcg" and r.value.isdigit()]


def test_hcg_rise_low_only_where_expected():
    # Barnhart 2004: a viable pregnancy rises at least 53% in 2 days.
    low = set()
    for pid in PATIENTS:
        values = _serum(pid)
        for (d1, v1), (d2, v2) in zip(values, values[1:]):
            if 1 <= d2 - d1 <= 3 and (v2 / v1) ** (2 / (d2 - d1)) - 1 < 0.53:
                low.add(pid)
    _only("hcg-rise-low", low)
    assert {pid for pid in ALERTING if len(_serum(pid)) >= 2} - low, "a normal rise is shown too"


def test_multiple_follicles_only_where_expected():
    # Evans 2020: a mature follicle is 14 mm or more; more than 2 calls for caution.
    many = set()
    for pid, rows in ROWS.items():
        for r in rows:
            if r.kind == "scan":
                follicles = [float(x) for x in r.value.split(" endo ")[0].split(",")]
                if sum(f >= 14 for f in follicles) > 2:
                    many.add(pid)
    _only("multiple-follicles", many)


@pytest.mark.parametrize("status", ["paused", "discharged", "pregnant"])
def test_every_status_is_shown(status: str):
    assert any(p["status"] == status for p in PATIENTS.values())
