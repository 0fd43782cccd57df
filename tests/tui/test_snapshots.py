"""Pictures of the main screens at 80x24 on the fixed day: a change in layout shows up here."""

from __future__ import annotations

import pytest

from tests.tui.conftest import settle
from tests.tui.fixture_store import add_long_cycle


async def _loaded(pilot) -> None:
    await settle(pilot)


def _keys_then_settle(*keys: str):
    async def run(pilot) -> None:
        await settle(pilot)
        await pilot.press(*keys)
        await settle(pilot)

    return run


def test_home_list(app_as, snap_compare):
    assert snap_compare(app_as("nell"), terminal_size=(80, 24), run_before=_loaded)


def test_record_chart(app_as, snap_compare):
    assert snap_compare(app_as("ada"), terminal_size=(80, 24), run_before=_keys_then_settle("down", "enter"))


def test_record_chart_wide(app_as, snap_compare):
    assert snap_compare(app_as("ada"), terminal_size=(120, 40), run_before=_keys_then_settle("down", "enter"))


@pytest.mark.parametrize("size", [(80, 24), (120, 40)], ids=["80x24", "120x40"])
def test_record_chart_of_a_long_cycle(app_as, service_ctx, snap_compare, size):
    # Day 106 of a cycle with no rise: the window of days around today, a fever above the scale.
    add_long_cycle(service_ctx("nell"))
    keys = ("slash", *"Lena", "enter", "enter")
    assert snap_compare(app_as("nell"), terminal_size=size, run_before=_keys_then_settle(*keys))


def test_quick_log_ready_to_save(app_as, snap_compare):
    keys = ("l", *"noor", "enter", "t", "enter", *"36.55")
    assert snap_compare(app_as("phil"), terminal_size=(80, 24), run_before=_keys_then_settle(*keys))


def test_alert_queue(app_as, snap_compare):
    assert snap_compare(app_as("ada"), terminal_size=(100, 30), run_before=_keys_then_settle("a"))
