"""The quick log's patient picker, typed as a clerk types a caller's name: surname first, without
accents, fast, and one Enter to move on."""

from __future__ import annotations

from contextlib import asynccontextmanager

import pytest
from textual.widgets import OptionList

from caseload.core.model import Kind
from caseload.application.entries import patient_entries
from caseload.application.patients import add_patient
from caseload.tui.screens.quick_log import QuickLogScreen
from tests.tui.conftest import settle
from tests.tui.fixture_store import TODAY

CALLERS = {
    "P0101": ("Katarzyna Nowak", "1990-03-02"),
    "P0102": ("Inês Carvalho", "1988-11-20"),
    "P0103": ("Łucja Wróbel", "1993-07-14"),
    "P0104": ("Katarzyna Nowak", "1979-01-30"),  # the same name, told apart by her date of birth
}
ANNAS = {f"P02{n:02d}": (f"Anna Test{n}", "1991-01-01") for n in range(10)}  # more than the picker lists


@pytest.fixture
def callers(service_ctx):
    nurse = service_ctx("nell")
    for pid, (name, born) in {**CALLERS, **ANNAS}.items():
        add_patient(nurse, pid, name, born, nurse="nell")
    return service_ctx("ada")


@asynccontextmanager
async def phil_typed(app_as, *keys: str):
    """The phone clerk's interface after these keys, typed with no pause."""
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await pilot.press(*keys)
        await settle(pilot)
        yield app, pilot


def match_lines(app) -> list[str]:
    options = app.screen.query_one("#matches", OptionList)
    return [str(options.get_option_at_index(i).prompt) for i in range(options.option_count)]


async def test_surname_first_finds_her_and_one_enter_moves_on_to_the_kind(app_as, callers):
    # Typed ahead with no pause: l, the name as the caller says it, Enter, t, Enter, the reading, Enter.
    async with phil_typed(app_as, "l", *"nowak katarzyna", "enter", "t", "enter", *"36.61", "enter") as (app, _):
        assert isinstance(app.screen, QuickLogScreen)
        [temp] = [e for e in patient_entries(callers, "P0101") if e.kind is Kind.TEMP]
        assert (temp.day, temp.value.number) == (TODAY, 36.61)
        assert not [e for e in patient_entries(callers, "P0104") if e.kind is Kind.TEMP]


async def test_two_of_the_same_name_show_their_dates_of_birth(app_as, callers):
    async with phil_typed(app_as, "l", *"katarzyna nowak") as (app, pilot):
        lines = match_lines(app)
        assert len(lines) == 2
        assert "P0101 Katarzyna Nowak  born 1990-03-02" in lines[0]
        assert "P0104 Katarzyna Nowak  born 1979-01-30" in lines[1]
        # Down, then one Enter: the second of them, and the typing goes on in the kind field.
        await pilot.press("down", "enter", *"bleed")
        await settle(pilot)
        assert app.screen.query_one("PatientPicker").patient.id == "P0104"
        assert app.focused.id == "kind" and app.focused.value == "bleed"


@pytest.mark.parametrize("typed, found", [
    ("ines", "P0102"),  # ê typed as e
    ("carvalho ines", "P0102"),
    ("lucja wrobel", "P0103"),  # Ł has no decomposition: it is folded to l all the same
    ("WRÓBEL", "P0103"),
])
async def test_accents_typed_without_accents_and_any_case_find_her(app_as, callers, typed, found):
    async with phil_typed(app_as, "l", *typed, "enter") as (app, _):
        assert app.screen.query_one("PatientPicker").patient.id == found


async def test_up_to_eight_matches_are_listed(app_as, callers):
    async with phil_typed(app_as, "l", *"anna") as (app, _):
        lines = match_lines(app)
        assert len(lines) == 8 and all("Anna Test" in line and "born 1991-01-01" in line for line in lines)
        assert app.screen.query_one("#matches").region.height == 8  # every one of them on the screen
