"""Pictures of the main screens at 80x24 (and the list at 120x40) on the fixed day: a change in layout shows up here."""

from __future__ import annotations

from datetime import datetime, timezone

import pytest

from caseload.application.alert_handling import acknowledge, list_alerts, resolve
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


def test_home_list_wide(app_as, snap_compare):
    """From 120 columns the list adds each patient's plan and nurse."""
    assert snap_compare(app_as("ada"), terminal_size=(120, 40), run_before=_loaded)


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
    assert snap_compare(app_as("ada"), terminal_size=(80, 24), run_before=_keys_then_settle("a"))


def test_alert_queue_wide(app_as, snap_compare):
    assert snap_compare(app_as("ada"), terminal_size=(120, 40), run_before=_keys_then_settle("a"))


def test_alert_queue_as_a_phone_clerk(app_as, snap_compare):
    assert snap_compare(app_as("phil"), terminal_size=(80, 24), run_before=_keys_then_settle("a", "down"))


def test_record_alerts_with_their_history(app_as, service_ctx, snap_compare):
    ctx = service_ctx("nell")
    fever = next(a for a in list_alerts(ctx) if a.kind == "fever")
    with ctx.store.clock_at(datetime(2026, 12, 1, 9, 30, tzinfo=timezone.utc)):
        acknowledge(ctx, fever.id, "called: flu since Sunday")
        resolve(ctx, fever.id, "recovered; reading flagged as illness")
    keys = ("a", "enter", "down", "down", "down")  # the queue, the record's alerts, down to the resolved fever
    assert snap_compare(app_as("nell"), terminal_size=(120, 40), run_before=_keys_then_settle(*keys))


def test_record_outlook_wide(app_as, snap_compare):
    """The outlook in the trade's words: phase, thermal shift, P(fertile) as percentages."""
    assert snap_compare(app_as("ada"), terminal_size=(120, 40), run_before=_keys_then_settle("down", "enter", "3"))
