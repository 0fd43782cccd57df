"""How far back an entry may be dated, on a real SQLite file: one logged entry goes back at most
LOG_DAYS_BACK days from the clinic's day (further is a mistyped year, almost always), and older
history is entered by importing it, which goes back as far as the patient's date of birth."""

from __future__ import annotations

import pytest

from caseload.application.clinic import Clinic, Identity
from caseload.application.csv_import import import_csv
from caseload.application.entries import LOG_DAYS_BACK, log_entry
from caseload.application.identity import os_account
from caseload.core.model import Kind, Role
from caseload.core.parse import InputError
from tests.conftest import TODAY

# TODAY is 2026-12-01; 2026 is no leap year, so 366 days back is 2025-11-30.
EARLIEST = "2025-11-30"
TOO_EARLY = ("day 2025-11-29 is more than 366 days before today (2026-12-01): log entries from 2025-11-30 on,"
             " and enter older history with 'caseload import FILE.csv'")


def written(store) -> tuple[int, int]:
    return len(store.entries.for_patient("P0001")), store.audit.count()


def test_the_window_is_a_year_and_a_day():
    assert LOG_DAYS_BACK == 366


def test_an_entry_up_to_366_days_back_is_logged_and_one_day_more_is_refused(as_role, patient, store):
    phone = as_role(Role.PHONE)
    assert log_entry(phone, patient.id, "bleed", "heavy", on=EARLIEST).entry.day.isoformat() == EARLIEST
    before = written(store)
    for day in ("2025-11-29", "-367"):
        with pytest.raises(InputError) as refused:
            log_entry(phone, patient.id, "bleed", "heavy", on=day)
        assert str(refused.value) == TOO_EARLY
    with pytest.raises(InputError, match="^day 2020-01-01 is more than 366 days before today"):
        log_entry(phone, patient.id, "temp", "36.7", on="2020-01-01")
    assert written(store) == before


def test_a_day_before_her_birth_is_still_named_as_such(as_role, patient):
    with pytest.raises(InputError, match=r"^day 1950-01-01 is before P0001's date of birth \(1992-05-17\)"):
        log_entry(as_role(Role.PHONE), patient.id, "bleed", "heavy", on="1950-01-01")


def test_older_history_is_imported(as_role, patient, store):
    history = b"patient,day,kind,value\nP0001,2020-01-01,bleed,heavy\nP0001,2020-01-02,temp,36.45\n"
    done = import_csv(as_role(Role.NURSE), history)
    assert (done.rows, done.patients) == (2, 1)
    assert sorted(e.day.isoformat() for e in store.entries.for_patient("P0001")) == ["2020-01-01", "2020-01-02"]


def test_the_phone_lines_save_refuses_an_old_day_before_asking_about_the_reading(store, patient):
    # 39.0 C is above the usual basal range, so a recent day would ask for a second look first.
    before = written(store)
    clinic = Clinic(store, Identity(os_account(), "phone1"), date_of_record=TODAY)  # the fixture closes the store
    with pytest.raises(InputError) as refused:
        clinic.log_call("P0001", Kind.TEMP, "39.0", "2025-11-29", None, "", "")
    assert str(refused.value) == TOO_EARLY
    assert written(store) == before
