"""Importing a file twice logs nothing twice: identical rows are skipped and counted, corrections marked as such are kept."""

from __future__ import annotations

import json

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

FILE = (
    "patient,day,kind,value,time,note\n"
    "P0001,2026-11-28,temp,36.45,07:10,\n"
    "P0001,2026-11-28,lh,negative,,\n"
    "P0001,2026-11-29,temp,98.1F,07:05,\n"  # 36.72 C once parsed: stored values are compared, not spellings
    "P0001,2026-11-29,mucus,creamy,,first call\n"
)


def _entries(clinic) -> list[dict]:
    return json.loads(clinic("entries", "P0001", "--json").output)


def test_the_same_file_twice_is_logged_once_and_the_repeats_are_counted(clinic, tmp_path):
    data = tmp_path / "calls.csv"
    data.write_text(FILE)
    first = clinic("import", str(data))
    assert first.exit_code == 0 and first.output.strip() == "Imported 4 entries for 1 patients."
    again = clinic("import", str(data))
    assert again.exit_code == 0
    assert again.output.strip() == "Imported 0 entries for 0 patients. 4 rows skipped as already logged."
    assert len(_entries(clinic)) == 4


def test_only_the_new_rows_of_a_longer_file_are_logged(clinic, tmp_path):
    data = tmp_path / "calls.csv"
    data.write_text(FILE)
    clinic("import", str(data))
    # The same reading in another spelling (36.72 C = 98.1 F) and a note that differs are still the same entry.
    data.write_text(FILE.replace("98.1F", "36.72").replace("first call", "second call")
                    + "P0001,2026-11-30,temp,36.80,07:00,\n")
    done = clinic("import", str(data))
    assert done.output.strip() == "Imported 1 entries for 1 patients. 4 rows skipped as already logged."
    assert len(_entries(clinic)) == 5


def test_a_different_time_or_value_is_a_new_entry(clinic, tmp_path):
    data = tmp_path / "calls.csv"
    data.write_text("patient,day,kind,value,time\nP0001,2026-11-28,lh,negative,08:00\n")
    clinic("import", str(data))
    data.write_text("patient,day,kind,value,time\nP0001,2026-11-28,lh,negative,20:00\n"
                    "P0001,2026-11-28,lh,positive,08:00\n")
    assert clinic("import", str(data)).output.strip() == "Imported 2 entries for 1 patients."


def test_a_row_marked_as_a_correction_is_logged_again(clinic, tmp_path):
    data = tmp_path / "calls.csv"
    data.write_text("patient,day,kind,value,correction\nP0001,2026-11-28,lh,negative,\n")
    clinic("import", str(data))
    data.write_text("patient,day,kind,value,correction\nP0001,2026-11-28,lh,negative,yes\n")
    assert clinic("import", str(data)).output.strip() == "Imported 1 entries for 1 patients."
    assert len(_entries(clinic)) == 2


def test_a_voided_entry_does_not_hold_back_its_row(clinic, tmp_path):
    data = tmp_path / "calls.csv"
    data.write_text("patient,day,kind,value\nP0001,2026-11-28,lh,negative\n")
    clinic("import", str(data))
    (entry,) = _entries(clinic)
    assert clinic("void", str(entry["id"]), "--reason", "wrong patient").exit_code == 0
    assert clinic("import", str(data)).output.strip() == "Imported 1 entries for 1 patients."


def test_a_correction_word_that_is_not_yes_or_no_is_refused(clinic, tmp_path):
    data = tmp_path / "calls.csv"
    data.write_text("patient,day,kind,value,correction\nP0001,2026-11-28,lh,negative,maybe\n")
    done = clinic("import", str(data))
    assert done.exit_code == 1
    assert done.output == "caseload: line 2: correction 'maybe' not understood: use yes or no (blank means no)\n"
    assert _entries(clinic) == []


ROW = st.tuples(st.sampled_from(["2026-11-25", "2026-11-26", "2026-11-27"]),
                st.sampled_from([("lh", "negative"), ("lh", "positive"), ("mucus", "dry"), ("symptom", "cramps")]),
                st.sampled_from(["", "07:00", "19:30"]))


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(ROW, min_size=1, max_size=8))
def test_importing_any_file_twice_adds_nothing_the_second_time(clinic, tmp_path, rows):
    before = len(_entries(clinic))
    lines = ["patient,day,kind,value,time"] + [f"P0001,{day},{kind},{value},{at}" for day, (kind, value), at in rows]
    data = tmp_path / "any.csv"
    data.write_text("\n".join(lines) + "\n")
    clinic("import", str(data))
    middle = len(_entries(clinic))
    # Distinct rows: at most one new entry per distinct (day, kind, value, time) in the file.
    assert middle - before <= len(set(rows))
    second = clinic("import", str(data))
    assert second.exit_code == 0 and second.output.endswith(f"{len(rows)} rows skipped as already logged.\n")
    assert len(_entries(clinic)) == middle
