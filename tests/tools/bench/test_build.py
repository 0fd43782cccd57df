"""The bulk loader writes what the single-row tables write; bench stores are built, counted and cached."""

from __future__ import annotations

from datetime import UTC, date, datetime

import pytest

from tools.bench.build import END, BenchSpec, bench_store, build, parse_sizes
from caseload.core.model import Actor, Kind, Patient, PatientStatus, Plan, Role, Staff
from caseload.core.parse import parse_entry
from caseload.application.staff import init_store
from tools.sim import simulate_caseload
from caseload.store import Store, StoreError
from caseload.store.bulk_load import NewEntry

AT = datetime(2026, 1, 5, 9, 30, tzinfo=UTC)
NURSE = Staff("nurse-1", "Nurse One", Role.NURSE, True, "nurse-one")
PATIENT = Patient("P1", "Pat One", date(1990, 4, 2), "nurse-1", PatientStatus.ACTIVE, Plan.TIMED, date(2026, 1, 1))
TEMP = parse_entry(Kind.TEMP, "98.1F", date(2026, 1, 5), on="2026-01-04", at="6:40", flags="poor-sleep")
FIXED = parse_entry(Kind.TEMP, "36.61", date(2026, 1, 5), on="2026-01-04", at="06:40", flags="poor-sleep")
SCAN = parse_entry(Kind.SCAN, "18,16.5,12 endo 8.5", date(2026, 1, 5), on="2026-01-05", note=" booked IUI ")


def _rows(store: Store, table: str) -> list[tuple]:
    return store.db.conn.execute(f"SELECT * FROM {table} ORDER BY rowid").fetchall()


def test_bulk_rows_and_audit_rows_are_those_of_single_row_writes(tmp_path, monkeypatch):
    # One pseudonym secret for both stores: their first audit rows (and so every chained hash) agree.
    monkeypatch.setattr("caseload.application.staff.secrets.token_hex", lambda n: "ab" * n)
    one, bulk = Store(tmp_path / "one.db", clock=lambda: AT), Store(tmp_path / "bulk.db", clock=lambda: AT)
    for store in (one, bulk):
        admin = init_store(store, "admin", "Ada Admin", "ada")
    nurse = Actor(NURSE, "nurse-one")

    def single():
        one.staff.add(admin, NURSE)
        one.patients.add(admin, PATIENT)
        first = one.entries.add(nurse, "P1", TEMP)
        one.entries.add(nurse, "P1", FIXED, supersedes=first.id, amend_reason="keying slip")
        one.entries.add(nurse, "P1", SCAN)

    one.transact(single, AT.date())  # the day of record bulk rows take from their time
    bulk.bulk.staff(admin, [NURSE])
    bulk.bulk.patients(admin, [PATIENT])
    first = bulk.bulk.next_entry_id()
    bulk.bulk.entries([NewEntry(first, nurse, "P1", TEMP, AT), NewEntry(first + 1, nurse, "P1", FIXED, AT, first, "keying slip"),
                       NewEntry(first + 2, nurse, "P1", SCAN, AT)], batch=2)  # fmt: skip
    for table in ("staff", "patient", "entry", "audit"):
        assert _rows(bulk, table) == _rows(one, table), table
    assert [e.current for e in bulk.entries.for_patient("P1")] == [False, True, True]


def test_taken_entry_ids_are_refused_with_the_next_free_one(tmp_path):
    store = Store(tmp_path / "s.db", clock=lambda: AT)
    admin = init_store(store, "admin", "Ada Admin", "ada")
    store.bulk.patients(admin, [Patient("P1", "Pat One", date(1990, 1, 1), None, created=date(2026, 1, 1))])
    store.bulk.entries([NewEntry(1, admin, "P1", SCAN, AT)])
    with pytest.raises(StoreError, match="entry id 1 is taken: new ids start at 2"):
        store.bulk.entries([NewEntry(1, admin, "P1", FIXED, AT)])
    with pytest.raises(ValueError, match="batch is 0"):
        store.bulk.entries([], batch=0)


@pytest.mark.parametrize(
    "text, expected", [("200x1", [(200, 1)]), (" 2000x2, 10000X1 ", [(2000, 2), (10000, 1)])]
)
def test_sizes_are_patients_by_years(text, expected):
    assert [(s.patients, s.years) for s in parse_sizes(text)] == expected


@pytest.mark.parametrize("text", ["", "200", "0x1", "200x0", "200x11", "twox1", "200x1,,x"])
def test_bad_sizes_say_what_is_accepted(text):
    with pytest.raises(ValueError, match="PATIENTSxYEARS|no sizes"):
        parse_sizes(text)


@pytest.fixture(scope="module")
def tiny(tmp_path_factory):
    folder = tmp_path_factory.mktemp("bench")
    return folder, bench_store(BenchSpec(8, 1, seed=3), folder)


def test_a_bench_store_holds_the_simulated_caseload_and_its_audit(tiny):
    _, built = tiny
    spec = built.spec
    charts = list(simulate_caseload(spec.seed, spec.patients, spec.start, END))
    with Store(built.path) as store:
        entries = store.entries.count()
        amended = store.db.conn.execute("SELECT count(*) FROM entry WHERE supersedes IS NOT NULL").fetchone()[0]
        logged = store.db.conn.execute("SELECT count(*) FROM audit WHERE action IN ('entry.log', 'entry.amend')").fetchone()[0]
        assert entries == built.entries == sum(len(c.entries) for _, c in charts) + amended
        assert logged == entries
        assert len(store.patients.all()) == built.patients == 8
        assert len(store.state.all()) == 8  # refreshed once: every patient has a snapshot
        assert store.check().ok
    assert spec.start == date(2025, 11, 30) and spec.today == date(2026, 11, 30)  # one year, then the Monday


def test_a_cached_store_is_reused_while_nothing_changed(tiny):
    folder, built = tiny
    again = bench_store(built.spec, folder)
    assert again.reused and again.path == built.path and again.entries == built.entries


def test_build_refuses_an_existing_file(tmp_path):
    (tmp_path / "x.db").write_text("")
    with pytest.raises(FileExistsError, match="exists"):
        build(BenchSpec(1, 1), tmp_path / "x.db")
