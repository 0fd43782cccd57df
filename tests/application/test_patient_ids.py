"""Patient ids: the one a registration form proposes (after the highest numbered id, never a taken one), and
an id being one whatever its letter case, on a real SQLite file."""

from __future__ import annotations

from datetime import date

import pytest
from hypothesis import given
from hypothesis import strategies as st

from caseload.application.caseload_view import show_patient
from caseload.application.clinic import Clinic, Identity, SameDayReading, SecondLook
from caseload.application.csv_import import import_csv
from caseload.application.entries import log_entry, patient_entries
from caseload.application.errors import Refused
from caseload.application.identity import os_account
from caseload.application.patients import add_patient, get_patient, proposed_id, update_patient
from caseload.core.model import Kind, Patient, Plan, Role
from caseload.core.parse import parse_id
from tests.conftest import TODAY


def test_the_next_number_keeps_the_prefix_and_width():
    # Worked examples (common practice: clinic numbers keep their prefix and zero padding).
    assert proposed_id([]) == "P0001"
    assert proposed_id(["P0001", "P0002", "P0041"]) == "P0042"
    assert proposed_id(["P0009", "P0010"]) == "P0011"
    assert proposed_id(["P9999"]) == "P10000"  # widens rather than wrapping round
    assert proposed_id(["P0007", "smith-2", "P0003"]) == "P0008"  # ids of other shapes are left alone
    assert proposed_id(["A12", "B7"]) == "A13"


def test_the_highest_number_wins_whatever_its_prefix_or_width():
    assert proposed_id(["P0041", "p0042"]) == "p0043"
    assert proposed_id(["P0041", "P43"]) == "P44"


ids = st.from_regex(r"[A-Za-z]{0,3}[0-9]{1,6}|[a-z]{1,5}-[a-z]{1,5}", fullmatch=True)


@given(st.lists(ids, max_size=30))
def test_the_proposal_is_free_and_a_valid_id(taken):
    proposal = proposed_id(taken)
    assert proposal.lower() not in {t.lower() for t in taken}
    assert parse_id(proposal, "patient") == proposal


# --- ids are one whatever their letter case (a clerk hears "p 1 0 3", not its case)

def store_rows(store) -> tuple[int, int, int]:
    return len(store.patients.all()), store.audit.count(), len(store.entries.for_patient("P0001"))


def test_an_id_differing_only_in_case_is_refused_naming_the_registered_one(as_role, patient, store):
    before = store_rows(store)
    for typed in ("p0001", " p0001 "):
        with pytest.raises(Refused) as refused:
            add_patient(as_role(Role.PHONE), typed, "Other Caller", "1990-01-01")
        assert str(refused.value) == ("patient id p0001 is taken as P0001: ids are unique whatever their letter case;"
                                      " choose another")
    with pytest.raises(Refused, match="^patient id P0001 is taken: choose another$"):
        add_patient(as_role(Role.PHONE), "P0001", "Other Caller", "1990-01-01")
    assert store_rows(store) == before


def test_an_id_typed_in_any_case_reaches_the_one_patient(as_role, patient, store):
    phone, nurse = as_role(Role.PHONE), as_role(Role.NURSE)
    logged = log_entry(phone, "p0001", "temp", "36.55")
    assert logged.entry.patient_id == "P0001"
    assert [e.patient_id for e in store.entries.for_patient("P0001")] == ["P0001"]
    assert get_patient(phone, " p0001 ") == patient  # the patient as registered, id unchanged
    assert show_patient(phone, "p0001").patient.id == "P0001"
    assert [e.id for e in patient_entries(phone, "p0001")] == [logged.entry.id]
    assert update_patient(nurse, "p0001", plan="timed").id == "P0001"
    assert store.patients.get("P0001").plan is Plan.TIMED
    done = import_csv(nurse, b"patient,day,kind,value\np0001,yesterday,bleed,heavy\n")
    assert (done.rows, done.patients) == (1, 1)
    assert [(e.patient_id, e.kind) for e in store.entries.for_patient("P0001")] == [("P0001", Kind.BLEED),
                                                                                  ("P0001", Kind.TEMP)]


@pytest.fixture
def older_store(as_role, store):
    """ab1 and AB1 registered as an older version allowed (its store had no rule on case): the store's
    trigger is dropped for the second one, as if it had been written before the trigger existed."""
    nurse = as_role(Role.NURSE)
    add_patient(nurse, "AB1", "Yara Upper", "1990-01-01")
    store.db.conn.execute("DROP TRIGGER patient_id_any_case_insert")
    store.transact(lambda: store.patients.add(nurse.actor, Patient("ab1", "Xena Lower", date(1991, 2, 2), None,
                                                                   created=TODAY)), TODAY)
    return nurse


def test_ids_an_older_store_holds_in_two_cases_are_each_reached_typed_exactly(older_store):
    assert get_patient(older_store, "AB1").name == "Yara Upper"
    assert get_patient(older_store, "ab1").name == "Xena Lower"
    assert log_entry(older_store, "ab1", "lh", "positive").entry.patient_id == "ab1"


def test_an_id_that_could_be_either_of_two_is_refused_not_guessed(older_store, store):
    before = len(store.entries.for_patient("AB1")), len(store.entries.for_patient("ab1"))
    with pytest.raises(Refused) as refused:
        log_entry(older_store, "Ab1", "lh", "positive")
    assert str(refused.value) == ("patient id 'Ab1' could be AB1 or ab1, registered before ids were unique whatever"
                                  " their case: type the id exactly as registered")
    assert (len(store.entries.for_patient("AB1")), len(store.entries.for_patient("ab1"))) == before
    with pytest.raises(Refused, match="^patient id aB1 is taken as AB1: ids are unique"):
        add_patient(older_store, "aB1", "Zoe Third", "1990-01-01")
    assert [p.id for p in store.patients.all()] == ["AB1", "ab1"]


def test_the_phone_lines_save_reads_her_day_by_the_registered_id(store, patient):
    clinic = Clinic(store, Identity(os_account(), "phone1"), date_of_record=TODAY)  # the fixture closes the store
    logged = clinic.log_call("p0001", Kind.MUCUS, "sticky", "today", None, "", "")
    assert logged.entry.patient_id == "P0001"
    # Her mucus and temperature of the day are found under the id typed in the other case.
    assert clinic.log_call("p0001", Kind.MUCUS, "creamy", "today", None, "", "") == SecondLook(
        "there is already a mucus entry that day (one a day is usual)")
    first = clinic.log_call("p0001", Kind.TEMP, "36.50", "today", None, "", "").entry
    same = clinic.log_call("p0001", Kind.TEMP, "36.60", "today", None, "", "")
    assert same == SameDayReading(first, "36.60")
    assert [e.kind for e in store.entries.for_patient("P0001")] == [Kind.MUCUS, Kind.TEMP]
