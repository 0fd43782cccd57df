"""The quick log at 80 columns and on narrower terminals (an SSH window of 40 columns): every field is
drawn whole enough to read and type in, and what is typed into a field shows in it."""

from __future__ import annotations

import pytest
from textual.geometry import Region

from caseload.application.entries import patient_entries
from caseload.core.model import Kind
from caseload.tui.screens.quick_log import QuickLogScreen
from tests.tui.conftest import burst, settle
from tests.tui.fixture_store import TODAY
from tests.tui.test_footer import drawn_rows

FIELDS = ("patient", "kind", "value", "day", "time", "flags", "note")
FLAGS_HINT = "illness,poor-sleep,alcohol,late,other"  # the temperature's flags, each a word the parser takes


def field_regions(app) -> dict[str, Region]:
    return {name: app.screen.query_one(f"#{name}").region for name in FIELDS}


def drawn_in(app, region: Region) -> str:
    """The characters drawn on the screen where `region` is (its first row)."""
    return drawn_rows(app)[region.y][region.x:region.right]


def assert_every_field_usable(app, where: str) -> dict[str, Region]:
    regions = field_regions(app)
    dialog = app.screen.query_one("#quick-log").content_region
    for name, region in regions.items():
        assert region.width > 0 and region.height == 1, f"{where}: #{name} is {region}"
        assert app.screen.region.contains_region(region), f"{where}: #{name} {region} is off the screen"
        assert dialog.contains_region(region), f"{where}: #{name} {region} is outside the dialog {dialog}"
    for name, region in regions.items():
        others = [other for other, r in regions.items() if other != name and r.overlaps(region)]
        assert others == [], f"{where}: #{name} is drawn under {others}"
    # '36.55' and the cursor after it: the longest reading a clerk types
    assert regions["value"].width >= 6, f"{where}: Value is {regions['value'].width} cells wide"
    return regions


@pytest.mark.parametrize("size", [(40, 24), (80, 24)])
async def test_every_field_of_the_quick_log_is_drawn_and_takes_what_is_typed(app_as, service_ctx, size):
    check = service_ctx("ada")
    app = app_as("phil")
    async with app.run_test(size=size) as pilot:
        await settle(pilot)
        await burst(pilot, "l", *"noor", "enter", "t", "enter", *"36.55")
        assert isinstance(app.screen, QuickLogScreen)
        regions = assert_every_field_usable(app, f"{size}")
        assert drawn_in(app, regions["value"]).startswith("36.55 ")  # all of it, then the cursor's cell
        await burst(pilot, "tab", "tab", "tab", *"illness")
        assert app.focused.id == "flags"
        assert drawn_in(app, regions["flags"]).startswith("illness ")
        assert "Ready: temperature 36.55 C on 1 Dec (illness)" in app.screen.query_one("#check").render().plain
        await burst(pilot, "enter")
    [reading] = [e for e in patient_entries(check, "P0004") if e.kind is Kind.TEMP and e.day == TODAY]
    assert (reading.value.number, reading.flags) == (36.55, ("illness",))


async def test_the_fields_stay_usable_when_the_terminal_is_narrowed_with_the_quick_log_open(app_as):
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await burst(pilot, "l", *"noor", "enter", "t", "enter", *"36.6")
        await pilot.resize_terminal(40, 24)
        await settle(pilot)
        regions = assert_every_field_usable(app, "narrowed to 40")
        assert drawn_in(app, regions["value"]).startswith("36.6 ")
        await pilot.resize_terminal(80, 24)
        await settle(pilot)
        regions = assert_every_field_usable(app, "widened to 80")
        assert regions["kind"].y == regions["value"].y  # back to Kind and Value side by side
        assert drawn_in(app, regions["value"]).startswith("36.6 ")


async def test_at_80_columns_the_flags_hint_is_drawn_whole(app_as):
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await burst(pilot, "l", *"noor", "enter", "t", "enter", *"36.55", "tab", "tab", "tab")
        assert app.focused.id == "flags" and app.focused.placeholder == FLAGS_HINT
        flags = app.screen.query_one("#flags").region
        assert flags.width > len(FLAGS_HINT)  # room for the cursor after the last flag typed
        assert drawn_in(app, flags).rstrip() == FLAGS_HINT
