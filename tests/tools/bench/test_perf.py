"""Summarising runs into figures, checking them against the design's targets, and reading growth."""

from __future__ import annotations

from datetime import date

from tools.bench.measure import week_before
from tools.bench.perf import growth, summarise, targets


def test_the_summary_week_is_the_last_complete_iso_week():
    assert week_before(date(2026, 11, 30)) == "2026-W48"  # a Monday: the week that ended yesterday
    assert week_before(date(2026, 12, 6)) == "2026-W48"  # its Sunday: week 49 is not over
    assert week_before(date(2027, 1, 4)) == "2026-W53"  # stdlib datetime: 2026 has 53 ISO weeks


def test_log_runs_pool_every_entry_for_median_and_95th_percentile():
    runs = [{"entry_seconds": [0.001 * k for k in range(1, 11)], "peak_mb": 60.0, "start_mb": 40.0},
            {"entry_seconds": [0.001 * k for k in range(11, 21)], "peak_mb": 70.0, "start_mb": 41.0}]  # fmt: skip
    f = summarise("log", runs)
    assert f["entries"] == 20 and f["median_ms"] == 10.5 and f["p95_ms"] == 19.0 and f["max_ms"] == 20.0
    assert f["peak_mb"] == 70.0


def test_refresh_ratio_is_over_the_plain_read_of_the_same_rows():
    runs = [{"seconds": s, "read_seconds": r, "rows": 1000, "entries_read_seconds": 8.0, "peak_mb": 50.0, "start_mb": 40.0}
            for s, r in ((6.0, 2.0), (9.0, 3.0), (3.0, 2.5))]  # fmt: skip
    f = summarise("refresh", runs)
    assert (f["median_s"], f["read_median_s"], f["ratio"], f["ratio_to_entries"]) == (6.0, 2.5, 2.4, 0.75)


def test_a_failed_run_marks_the_figure_missing():
    assert summarise("summary-json", [{"error": "ModuleNotFoundError: no reports"}]) == {
        "missing": "ModuleNotFoundError: no reports"
    }


def _size(name: str, patients: int, entries: int, list_s: float, peak: float) -> dict:
    return {"size": name, "patients": patients, "entries": entries,
            "figures": {"list": {"median_s": list_s, "peak_mb": peak}, "log": {"median_ms": 8.0, "p95_ms": 25.0, "peak_mb": peak},
                        "list-json": {"median_s": 0.4 + list_s}}}  # fmt: skip


def test_targets_are_read_at_two_thousand_patients_and_memory_everywhere():
    sizes = [_size("200x1", 200, 10**5, 0.05, 90.0), _size("2000x2", 2000, 2 * 10**6, 0.6, 120.0),
             _size("10000x1", 10000, 5 * 10**6, 2.0, 320.0)]  # fmt: skip
    found = {(t.what, t.size): t for t in targets(sizes)}
    assert not found[("`caseload list --json` as a process", "2000x2")].met
    assert found[("log one entry, median", "2000x2")].met and not found[("log one entry, p95", "2000x2")].met
    assert found[("peak memory", "200x1")].met and not found[("peak memory", "10000x1")].met
    assert ("`caseload list --json` as a process", "200x1") not in found


def test_growth_is_linear_when_the_cost_per_patient_stays_flat():
    sizes = [_size("200x1", 200, 10**5, 0.05, 90.0), _size("2000x2", 2000, 2 * 10**6, 0.5, 90.0),
             _size("10000x1", 10000, 5 * 10**6, 4.0, 90.0)]  # fmt: skip
    rows = {g["figure"]: g for g in growth(sizes)}
    listing = rows["morning list (s)"]
    assert listing["unit_costs"] == {"200x1": 0.00025, "2000x2": 0.00025, "10000x1": 0.0004}
    assert listing["largest_over_smallest"] == 1.6 and listing["linear"] is False
    assert rows["log one entry, median (ms)"]["linear"] is True
