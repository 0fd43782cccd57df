"""Every footer is read whole at 80x24: each key it shows is drawn with all of its words, and
nothing else is drawn after the last one. Lesser keys are left out of the footer, not cut; the
help (`?`) lists them all."""

from __future__ import annotations

import html
import re

import pytest
from textual.binding import Binding

from caseload.tui.key_help import SENTENCES
from caseload.tui.screens.alert_queue import AlertQueueScreen
from caseload.tui.screens.caseload import CaseloadScreen
from caseload.tui.screens.quick_log import QuickLogScreen
from caseload.tui.screens.record import RecordScreen
from caseload.tui.widgets.caseload_table import CaseloadTable
from caseload.tui.widgets.key_bar import KeyBar, KeyItem, fitted, key_items
from tests.tui.conftest import settle
from tests.tui.fixture_store import add_long_cycle
from tests.tui.test_entries_and_help import help_listed
from tests.tui.test_quick_log_safety import open_record

SIZE = (80, 24)  # the VT100 terminal's size, still the least an SSH session is expected to give (common practice)
# One run of characters in the screenshot: its x, its length (both in SVG units), its row, its text.
SPAN = re.compile(r'<text [^>]*?x="([\d.]+)"[^>]*?textLength="([\d.]+)"'
                  r'[^>]*?clip-path="url\(#[\w-]+-line-(\d+)\)">([^<]*)</text>')


def drawn_rows(app) -> list[str]:
    """The screen as drawn, row by row: the text of the screenshot put back in its columns."""
    width, height = app.size
    rows = [[" "] * width for _ in range(height)]
    for x, length, row, chars in SPAN.findall(app.export_screenshot()):
        chars = html.unescape(chars).replace("\xa0", " ")  # the screenshot writes spaces as no-break spaces
        column = round(float(x) / (float(length) / len(chars)))
        for offset, char in enumerate(chars):
            if int(row) < height and column + offset < width:
                rows[int(row)][column + offset] = char
    return ["".join(row) for row in rows]


def footer_items(app) -> list[str]:
    """What the footer of the screen in front draws, in order: each key with its words, and a
    group's keys with the group's word."""
    return [item.text for item in app.screen.query_one(KeyBar).drawn]


def assert_footer_whole(app, where: str) -> None:
    bottom = drawn_rows(app)[-1]
    items = footer_items(app)
    assert items, f"{where}: no footer keys"
    for item in items:
        assert item in bottom, f"{where}: '{item}' is cut in '{bottom}'"
    assert bottom.rstrip().endswith(items[-1]), f"{where}: stray characters in '{bottom}'"


async def tabs_of_the_record(app, pilot, where: str) -> None:
    for tab, name in zip("12345", ("chart", "cycles", "outlook", "alerts", "entries")):
        await pilot.press(tab)
        await settle(pilot)
        assert_footer_whole(app, f"{where}, {name} tab")


@pytest.mark.parametrize("staff", ["nell", "phil", "ada"])
async def test_the_main_screens_footers_are_whole_at_80_columns(app_as, staff):
    app = app_as(staff)
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        assert isinstance(app.screen, CaseloadScreen)
        assert_footer_whole(app, "list")
        await pilot.press("slash", *"no")
        await settle(pilot)
        assert_footer_whole(app, "list, searching")
        app.screen.query_one(CaseloadTable).focus()  # the list still searched: its keys and Esc's
        await settle(pilot)
        assert "esc Clear" in footer_items(app) and "⏎ Open" in footer_items(app)
        assert_footer_whole(app, "list, searched")
        await pilot.press("escape", "a")
        await settle(pilot)
        assert isinstance(app.screen, AlertQueueScreen)
        assert_footer_whole(app, "alert queue")
        await pilot.press("escape")
        await open_record(app, pilot, "P0004")
        assert isinstance(app.screen, RecordScreen)
        await tabs_of_the_record(app, pilot, "record")
        await pilot.press("l")
        await settle(pilot)
        assert isinstance(app.screen, QuickLogScreen)
        assert_footer_whole(app, "quick log")


async def test_the_footer_of_a_long_cycles_chart_is_whole(app_as, service_ctx):
    add_long_cycle(service_ctx("nell"))  # the chart's own keys move its days
    app = app_as("nell")
    async with app.run_test(size=SIZE) as pilot:
        await open_record(app, pilot, "P0006")
        assert "←→ Days" in footer_items(app)  # the group's keys, then its word
        await tabs_of_the_record(app, pilot, "long cycle")


async def test_the_dialogs_footers_are_whole_at_80_columns(app_as):
    app = app_as("nell")
    async with app.run_test(size=SIZE) as pilot:
        await open_record(app, pilot, "P0004")
        for key, where in (("n", "note"), ("c", "care"), ("question_mark", "help")):
            await pilot.press(key)
            await settle(pilot)
            assert_footer_whole(app, where)
            if where == "help":  # the keys left out of the record's footer are told here
                listed = help_listed(app)
                assert all(SENTENCES[k] in listed for k in ("record.referral", "record.cycle_earlier", "app.quit"))
            await pilot.press("escape")
            await settle(pilot)
        await pilot.press("5", "a")
        await settle(pilot)
        assert_footer_whole(app, "amend")


TABS = Binding.Group("Tabs")


def shown_as(binding: Binding) -> str:
    return {"escape": "esc", "question_mark": "?"}.get(binding.key, binding.key)


def test_the_bar_shows_an_action_once_and_a_groups_keys_before_its_word():
    bindings = [
        (Binding("1", "tab('chart')", "Chart", group=TABS), True, ""),
        (Binding("2", "tab('cycles')", "Cycles", group=TABS), False, ""),
        (Binding("escape", "back", "Back"), True, ""),
        (Binding("question_mark", "help", "Help"), True, ""),
        (Binding("f1", "help", "Help"), True, ""),  # a second key of the same action
        (Binding("q", "quit", "Quit", show=False), True, ""),
        (Binding("3", "tab('alerts')", "Alerts", group=TABS), True, ""),  # the group's lone key here
    ]
    assert [item.text for item in key_items(bindings, shown_as)] == ["12 Tabs", "esc Back", "? Help", "3 Alerts"]
    tabs = key_items(bindings, shown_as)[0]
    assert tabs.keys == (("1", "1"), ("2", "2")) and tabs.enabled  # one of its keys works
    assert key_items([(Binding("a", "amend", "Amend"), False, "")], shown_as)[0].enabled is False


def test_a_key_that_does_not_fit_ends_the_bar_whole():
    items = [KeyItem((("a", "a"),), "Alerts", True), KeyItem((("l", "l"),), "Log", True),
             KeyItem((("n", "n"),), "New", True)]
    # "a Alerts" is 8 columns, "l Log" 5 and "n New" 5, one space apart: 8 + 1 + 5 = 14.
    assert [i.text for i in fitted(items, 14)] == ["a Alerts", "l Log"]
    assert [i.text for i in fitted(items, 13)] == ["a Alerts"]  # "n New" would fit, but not after a gap
    assert fitted(items, 7) == []
    assert len(fitted(items, 20)) == 3


async def test_a_click_on_a_key_or_its_word_presses_it(app_as):
    app = app_as("nell")
    async with app.run_test(size=SIZE) as pilot:
        await settle(pilot)
        line = " ".join(footer_items(app))
        await pilot.click(KeyBar, offset=(line.index("a Alerts") + 3, 0))  # on the word
        await settle(pilot)
        assert isinstance(app.screen, AlertQueueScreen)
        line = " ".join(footer_items(app))
        await pilot.click(KeyBar, offset=(line.index("esc Back"), 0))  # on the key
        await settle(pilot)
        assert isinstance(app.screen, CaseloadScreen)
