"""The home list: every patient under care, the service's cycle days and order, filters and search."""

from __future__ import annotations

import asyncio
from dataclasses import replace

import pytest

from caseload.application.caseload_view import list_caseload
from caseload.application.clinic import Clinic, Identity
from caseload.application.staff import init_store
from caseload.application.entries import log_entry
from caseload.application.patients import add_patient
from caseload.core.model import Kind, Severity
from caseload.store import Store
from caseload.tui.app import make_app
from caseload.tui.screens.caseload import CaseloadScreen
from caseload.tui.screens.record import RecordScreen
from caseload.tui.search import find_patients
from caseload.tui.widgets import caseload_table
from caseload.tui.widgets.caseload_table import CaseloadTable, layout, row_cells
from caseload.tui.widgets.filter_bar import FilterBar, Scope
from caseload.tui.widgets.status_line import StatusLine
from tests.tui.conftest import burst, settle
from tests.tui.fixture_store import ODD_NAME, TODAY


def shown_rows(app) -> list[str]:
    table = app.screen.query_one(CaseloadTable)
    return table.patient_ids


def cell(app, patient_id: str, column: str) -> str:
    table = app.screen.query_one(CaseloadTable)
    return table.get_cell(patient_id, column).plain


async def test_list_shows_the_service_order_and_cycle_days(app_as, service_ctx):
    lines = list_caseload(service_ctx("ada"))
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        assert shown_rows(app) == [line.patient.id for line in lines]
        assert "P0005" not in shown_rows(app)  # discharged
        for line in lines:
            assert cell(app, line.patient.id, "cd").strip() == str(line.cycle_day)
        # Built so that P0001 is on cycle day 18 and P0003 on day 5 (day 1 = first day of flow).
        assert cell(app, "P0001", "cd").strip() == "18"
        assert cell(app, "P0003", "cd").strip() == "5"


async def test_top_alert_and_count_of_more(app_as, service_ctx):
    line = next(l for l in list_caseload(service_ctx("ada")) if l.patient.id == "P0002")
    assert len(line.alerts) == 2
    app = app_as("ada")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        text = cell(app, "P0002", "alert")
        assert text.startswith(line.top_alert.severity.value)
        assert text.endswith("+1 more")


async def test_header_counts_open_alerts_by_severity(app_as, service_ctx):
    lines = list_caseload(service_ctx("ada"))
    today_count = sum(1 for l in lines for a in l.alerts if a.severity.value == "today")
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        status = app.screen.query_one(StatusLine).render().plain
        assert "1 Dec 2026" in status and "Ada Admin (admin)" in status
        assert f"today {today_count}" in status


async def test_a_nurse_starts_on_her_own_patients_and_can_see_all(app_as):
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        assert shown_rows(app) == ["P0002", "P0001"]
        await pilot.press("m")
        await settle(pilot)
        assert set(shown_rows(app)) == {"P0001", "P0002", "P0003", "P0004"}


async def test_search_narrows_as_you_type_and_escape_clears(app_as):
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press("slash", *"lin")
        await pilot.pause()
        assert shown_rows(app) == ["P0002"]  # Rosa Lind
        await pilot.press("escape")
        await pilot.pause()
        assert len(shown_rows(app)) == 4
        await pilot.press("slash", *"p000")
        await pilot.pause()
        assert len(shown_rows(app)) == 4


async def test_filters_by_alert_kind_and_plan(app_as):
    app = app_as("ada")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        app.screen.query_one("#alert-kind").value = "logging-gap"
        await pilot.pause()
        assert shown_rows(app) == ["P0004"]
        app.screen.query_one("#alert-kind").value = "any"
        app.screen.query_one("#plan").value = "timed"
        await pilot.pause()
        assert shown_rows(app) == ["P0002"]
        assert app.screen.query_one(FilterBar).filters.plan == "timed"


async def test_user_text_is_shown_literally(app_as):
    app = app_as("ada")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        shown = cell(app, "P0003", "patient")
        assert "[bold]" in shown  # not taken as markup
        assert "\x1b" not in shown and "\\x1b" in shown  # the escape character is shown, not sent
        assert ODD_NAME.split("\x1b")[0] in shown


async def test_an_idle_list_asks_the_store_one_cheap_question_and_reads_only_what_changed(app_as, service_ctx):
    other = service_ctx("nora")  # another terminal: a connection of its own
    app = app_as("ada", refresh_seconds=0.1)
    reads: list[str] = []
    clinic = app.clinic
    read_all, read_since = clinic.caseload_read, clinic.caseload_since
    clinic.caseload_read = lambda: reads.append("all") or read_all()
    clinic.caseload_since = lambda mark, lines: reads.append("since") or read_since(mark, lines)
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await asyncio.sleep(0.5)  # several polls with nothing committed elsewhere
        await settle(pilot)
        assert reads == ["all"]
        before = {line.patient.id: line for line in app.roster}
        log_entry(other, "P0004", "temp", "36.48")
        await asyncio.sleep(0.3)
        await settle(pilot)
        assert reads == ["all", "since"]
        assert cell(app, "P0004", "last") == "0d"  # was 5d
        assert [e.value.number for e in other.store.entries.for_patient("P0004")][-1] == 36.48
        after = {line.patient.id: line for line in app.roster}
        assert all(after[pid] is before[pid] for pid in before if pid != "P0004")  # the others were not read again


async def test_a_patient_with_no_nurse_is_under_unassigned_for_every_nurse(app_as, service_ctx):
    add_patient(service_ctx("phil"), "P0006", "Wren Newcaller", "1996-02-02")  # a clerk registers her, no nurse
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("u")  # typed before the list is read
        await settle(pilot)
        assert shown_rows(app) == ["P0006"]
        assert app.screen.query_one(FilterBar).filters.scope is Scope.UNASSIGNED
        assert "[unassigned]" in app.screen.query_one("#mine").render().plain
        await pilot.press("u", "m")  # back to all, then to her own, typed with no pause
        await settle(pilot)
        assert shown_rows(app) == ["P0002", "P0001"]
        await pilot.press("u", "enter")  # straight to the newcomer's record
        await settle(pilot)
        assert isinstance(app.screen, RecordScreen) and app.screen.patient_id == "P0006"
    assert service_ctx("ada").store.patients.get("P0006").nurse_id is None


async def test_at_80_columns_names_keep_their_room_and_cycle_day_stays(app_as, service_ctx):
    for pid, name in (("P0006", "Siobhan Keane"), ("P0007", "Oksana Shevchenko")):
        add_patient(service_ctx("nell"), pid, name, "1990-01-01", nurse="nell")
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        table = app.screen.query_one(CaseloadTable)
        # The next event gives way to the names and the alert; cycle day and days since the last entry stay.
        assert table.column_keys() == ["patient", "cd", "phase", "alert", "last"]
        assert cell(app, "P0006", "patient") == "P0006 Siobhan Keane"
        assert cell(app, "P0007", "patient") == "P0007 Oksana Shevchenko"
        assert cell(app, "P0001", "cd").strip() == "18"
        await pilot.resize_terminal(119, 40)
        await settle(pilot)
        assert "plan" not in table.column_keys()
        await pilot.resize_terminal(120, 40)
        await settle(pilot)
        assert table.column_keys()[-2:] == ["plan", "nurse"]
        assert cell(app, "P0007", "nurse") == "nell"


def test_the_next_event_gives_way_only_when_names_and_alerts_need_the_room():
    keys = lambda width, names: [c.key for c, _ in layout(width, names)]  # noqa: E731
    assert "next" not in keys(80, len("P0007 Oksana Shevchenko "))
    assert "next" in keys(80, len("P0001 Ann Lee "))
    assert "next" in keys(100, len("P0007 Oksana Shevchenko "))


async def test_without_colour_urgent_is_reversed_and_today_bold(app_as, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        table = app.screen.query_one(CaseloadTable)
        flagged = next(line for line in app.roster if line.alerts)
        table.show(tuple(replace(flagged, alerts=(replace(flagged.top_alert, severity=severity),),
                                 patient=replace(flagged.patient, id=f"X{n}"))
                         for n, severity in enumerate(Severity)))
        await pilot.pause()
        seen = {}
        for y in range(1, table.row_count + 1):
            for segment in table.render_line(y):
                for severity in Severity:
                    if f"{severity.value} " in segment.text:
                        seen[severity] = segment.style
        plain = seen[Severity.SOON]
        assert seen[Severity.URGENT].reverse and seen[Severity.URGENT].bold
        assert seen[Severity.TODAY].bold and not seen[Severity.TODAY].dim
        assert not plain.bold and not plain.reverse  # ordinary text, for comparison


async def test_a_large_caseload_draws_only_the_rows_in_view(app_as, monkeypatch):
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        table = app.screen.query_one(CaseloadTable)
        many = tuple(replace(line, patient=replace(line.patient, id=f"X{i:05d}"))
                     for i in range(2500) for line in app.roster)  # 10,000 rows
        drawn = []
        monkeypatch.setattr(caseload_table, "row_cells", lambda line, *how: drawn.append(line) or row_cells(line, *how))
        table.show(many)
        await pilot.pause()
        assert 0 < len(drawn) <= 2 * table.size.height
        drawn.clear()
        await pilot.press("end")
        await pilot.pause()
        assert table.current_patient_id() == many[-1].patient.id
        assert many[-1] in drawn and len(drawn) <= 2 * table.size.height


async def test_an_empty_caseload_says_so_once_read(tmp_path):
    with Store(tmp_path / "empty.db") as store:
        init_store(store, "ada", "Ada Admin", "ada-os")
        app = make_app(Clinic(store, Identity("ada-os"), date_of_record=TODAY), refresh_seconds=60)
        async with app.run_test(size=(80, 24)) as pilot:
            await settle(pilot)
            assert app.screen.query_one("#list-note").render().plain == "0 of 0 patients"


# --- typed ahead: keys in one burst, as a fast typist or an SSH link delivers them

CALLERS = {  # added to the fixture's P0001-P0004 (P0004 is Noor Haddad, nora's)
    "P0040": ("Zofia Bronowak", "nora"),  # "nowak" inside a word only
    "P0041": ("Inês Łukasik", "nora"),
    "P0042": ("Noora Lind", "nell"),
    "P0043": ("Katarzyna Nowak", "nora"),
}


def add_callers(ctx) -> None:
    for pid, (name, nurse) in CALLERS.items():
        add_patient(ctx, pid, name, "1991-04-09", nurse=nurse)


def opened_id(app) -> str | None:
    return app.screen.patient_id if isinstance(app.screen, RecordScreen) else None


def notes_in_store(ctx) -> dict[str, list[str]]:
    """Every note entry, by patient."""
    out: dict[str, list[str]] = {}
    for pid in ["P0001", "P0002", "P0003", "P0004", *CALLERS]:
        texts = [e.value.text for e in ctx.store.entries.for_patient(pid) if e.kind is Kind.NOTE]
        if texts:
            out[pid] = texts
    return out


@pytest.mark.parametrize("typed, expected", [
    ("P0043", "P0043"),  # the whole id, not P0004 or P0040 that share its first characters
    ("p0043", "P0043"),  # case never matters
    ("P0004", "P0004"),
    ("nowak", "P0043"),  # a word of the name before a word that only holds it (Bronowak)
    ("nowak katarzyna", "P0043"),  # the name's words in any order
    ("lukasik ines", "P0041"),  # without the accents she was registered with
    ("NOORA", "P0042"),
])
async def test_search_then_enter_in_one_burst_opens_the_top_match_of_the_whole_text(app_as, service_ctx,
                                                                                    typed, expected):
    check = service_ctx("ada")
    add_callers(check)
    before = notes_in_store(check)
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        # a note typed straight on lands in the record that opened, and only there
        await burst(pilot, "slash", *typed, "enter", "n", *"rang back", "enter")
        await settle(pilot)
        assert opened_id(app) == expected
    assert notes_in_store(check) == {**before, expected: before.get(expected, []) + ["rang back"]}


async def test_a_part_of_an_id_opens_the_first_it_starts_in_triage_order(app_as, service_ctx):
    check = service_ctx("ada")
    add_callers(check)
    lines = list_caseload(check)
    starting = [line.patient.id for line in lines if line.patient.id.startswith("P004")]
    # Ranking of caseload/tui/search.py: ids that "P004" starts tie at rank 1 and keep the triage order.
    top = find_patients([line.patient for line in lines], "P004", limit=1)[0].id
    assert top == starting[0] and len(starting) == 4  # P0040-P0043 (not P0004)
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await burst(pilot, "slash", *"P004", "enter")
        assert opened_id(app) == top
        await pilot.press("escape")
        await settle(pilot)
        # Back on the list: the matches best first, the cursor on the one that opened.
        table = app.screen.query_one(CaseloadTable)
        assert table.patient_ids == starting and table.current_patient_id() == top


async def test_the_list_shows_a_search_best_match_first(app_as, service_ctx):
    check = service_ctx("ada")
    add_callers(check)
    order = [line.patient.id for line in list_caseload(check)]
    assert order.index("P0040") < order.index("P0043")  # Bronowak before Nowak in triage order
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await burst(pilot, "slash", *"nowak")
        assert shown_rows(app) == ["P0043", "P0040"]  # a word the name starts with, then a word holding it


async def test_enter_typed_before_the_list_is_read_waits_for_it(app_as, service_ctx):
    add_callers(service_ctx("ada"))
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await burst(pilot, "slash", *"P0043", "enter", "2")  # and on to her cycles
        assert opened_id(app) == "P0043"
        assert app.screen.query_one("TabbedContent").active == "cycles"


@pytest.mark.parametrize("staff, typed, says", [
    ("ada", "P0099", "No patient matches 'P0099'; nothing opened."),
    ("ada", "zzz", "No patient matches 'zzz'; nothing opened."),
    # her own patients are shown: Katarzyna Nowak is nora's
    ("nell", "P0043", "No patient matches 'P0043' among the patients shown (mine); nothing opened."),
])
async def test_enter_on_a_search_that_finds_nobody_opens_nothing_and_says_so(app_as, service_ctx, staff, typed, says):
    add_callers(service_ctx("ada"))
    app = app_as(staff)
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await burst(pilot, "slash", *typed, "enter", "1")
        assert isinstance(app.screen, CaseloadScreen)
        assert [n.message for n in app._notifications if "No patient" in n.message] == [says]
        assert app.focused.id == "search" and app.focused.value == typed + "1"  # still typing, nothing lost


async def test_enter_on_an_empty_search_goes_back_to_the_list_and_the_keys_after_it_move_there(app_as, service_ctx):
    second = list_caseload(service_ctx("ada"))[1].patient.id
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await burst(pilot, "slash", "enter", "down", "enter")
        assert opened_id(app) == second


@pytest.mark.parametrize("keys, expected", [
    (("u", "enter"), "P0006"),  # the filter typed and its top row opened in one burst
    (("u", "m", "enter"), "P0002"),  # to unassigned, then to her own: her top patient, not the newcomer
    (("slash", *"lind", "escape", "u", "enter"), "P0006"),  # a search cleared, then the filter
])
async def test_enter_after_a_filter_key_in_one_burst_opens_from_the_list_that_key_set(app_as, service_ctx, keys,
                                                                                       expected):
    check = service_ctx("phil")
    add_patient(check, "P0006", "Wren Newcaller", "1996-02-02")  # a clerk registers her, no nurse
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await burst(pilot, *keys)
        assert opened_id(app) == expected


def status_count(app) -> str:
    """The part of the status line between the bars: what the list shows and how many."""
    return app.screen.query_one(StatusLine).render().plain.split(" │ ")[1]


async def test_the_status_line_says_what_the_list_shows(app_as, service_ctx):
    check = service_ctx("phil")
    add_patient(check, "P0006", "Wren Newcaller", "1996-02-02")  # no nurse
    lines = list_caseload(service_ctx("ada"))
    timed_today = sum(1 for l in lines if l.patient.plan.value == "timed" for a in l.alerts if a.severity is Severity.TODAY)
    app = app_as("nell")
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        assert status_count(app) == "mine: 2 of 5"  # P0001 and P0002 are nell's; five under care
        await burst(pilot, "u")
        assert status_count(app) == "unassigned: 1 of 5"
        await burst(pilot, "u")
        assert status_count(app) == "all 5"
        app.screen.query_one("#alert-kind").value = "logging-gap"
        await settle(pilot)
        assert status_count(app) == "charting gap: 1 of 5"  # P0004, no entry for 5 days
        app.screen.query_one("#alert-kind").value = "any"
        app.screen.query_one("#plan").value = "timed"
        await settle(pilot)
        assert status_count(app) == "plan timed: 1 of 5"  # P0002
        # the alerts counted are those of the patients shown
        assert f"today {timed_today}" in app.screen.query_one(StatusLine).render().plain
        await burst(pilot, "u", "m", "slash", *"rosa")  # through unassigned to her own, then a search
        assert status_count(app) == "mine, plan timed, search: 1 of 5"
        await burst(pilot, *"zzz")
        assert status_count(app) == "mine, plan timed, search: 0 of 5"


# --- keys after Enter act on the record it opens, in the order typed (common practice: type-ahead)

@pytest.mark.parametrize("downs", [0, 1, 2])
async def test_a_note_typed_straight_after_enter_goes_to_the_highlighted_patient(app_as, service_ctx, downs):
    check = service_ctx("ada")
    before = notes_in_store(check)
    patients = len(check.store.patients.all())
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        expected = app.screen.query_one(CaseloadTable).patient_ids[downs]
        await burst(pilot, *["down"] * downs, "enter", "n", *"rang back", "enter")
        await settle(pilot)
        assert opened_id(app) == expected
    assert notes_in_store(check) == {**before, expected: before.get(expected, []) + ["rang back"]}
    assert len(check.store.patients.all()) == patients  # nobody registered: `n` was the record's, not the list's
