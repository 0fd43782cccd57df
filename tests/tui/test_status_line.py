"""The status line on a narrow terminal: the lesser words go first, the alert counts stay."""

from __future__ import annotations

from datetime import date

import pytest

from caseload.application.caseload_view import list_caseload
from caseload.core.model import Severity
from caseload.tui.widgets.status_line import StatusParts, fitted_status
from tests.tui.conftest import settle
from tests.tui.fixture_store import TODAY
from tests.tui.test_footer import drawn_rows


def counts_of(ctx) -> str:
    """The open alerts of the whole caseload by severity, as the status line words them."""
    counts = {s: 0 for s in Severity}
    for line in list_caseload(ctx):
        for alert in line.alerts:
            counts[alert.severity] += 1
    return " ".join(f"{s.value} {counts[s]}" for s in Severity)


async def test_at_40_columns_the_status_line_keeps_every_alert_count(app_as, service_ctx):
    counts = counts_of(service_ctx("ada"))
    assert counts == "urgent 0 today 2 soon 2 info 0"  # the fixture's: P0002's fever and more
    app = app_as("ada")
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        assert drawn_rows(app)[0].strip() == f"1 Dec 2026 Ada Admin (admin) │ all 4 │ {counts}"
        await pilot.resize_terminal(40, 24)
        await settle(pilot)
        # The role, the year, the name and how many are shown have gone; the day and every count stay.
        assert drawn_rows(app)[0].strip() == f"1 Dec │ {counts}"
        await pilot.resize_terminal(30, 24)
        await settle(pilot)
        assert drawn_rows(app)[0].strip() == "1 Dec │ today 2 soon 2"  # the severities counting none go last
        await pilot.resize_terminal(80, 24)
        await settle(pilot)
        assert drawn_rows(app)[0].strip() == f"1 Dec 2026 Ada Admin (admin) │ all 4 │ {counts}"


async def test_at_40_columns_a_view_of_another_day_still_says_so(app_as, service_ctx):
    app = app_as("ada", today=TODAY.replace(day=2), as_of=TODAY)
    async with app.run_test(size=(40, 24)) as pilot:
        await settle(pilot, rounds=5)
        assert drawn_rows(app)[0].strip() == "1 Dec read-only view │ today 2 soon 2"


PARTS = StatusParts(day=date(2026, 12, 4), read_only=False, staff=("Nell Nurse", "nurse"),
                    narrowed=("mine", "fever"), shown=3, total=40,
                    counts={Severity.URGENT: 1, Severity.TODAY: 12, Severity.SOON: 0, Severity.INFO: 0})


FULL = "4 Dec 2026 Nell Nurse (nurse) │ mine, fever: 3 of 40 │ urgent 1 today 12 soon 0 info 0"


@pytest.mark.parametrize(
    "width, line",
    [
        (120, FULL),
        (len(FULL), FULL),
        (len(FULL) - 1, "4 Dec 2026 Nell Nurse │ mine, fever: 3 of 40 │ urgent 1 today 12 soon 0 info 0"),
        (77, "4 Dec Nell Nurse │ mine, fever: 3 of 40 │ urgent 1 today 12 soon 0 info 0"),
        (72, "4 Dec │ mine, fever: 3 of 40 │ urgent 1 today 12 soon 0 info 0"),
        (61, "4 Dec │ 3 of 40 │ urgent 1 today 12 soon 0 info 0"),  # still said to be narrowed
        (48, "4 Dec │ urgent 1 today 12 soon 0 info 0"),
        (39, "4 Dec │ urgent 1 today 12 soon 0 info 0"),
        (38, "4 Dec │ urgent 1 today 12"),
        (10, "4 Dec │ urgent 1 today 12"),  # nothing shorter: the counts are cut last, at the right
    ],
)
def test_the_lesser_words_go_first(width, line):
    assert fitted_status(PARTS, lambda severity: "", width).plain == line


def test_with_no_open_alert_the_narrowest_line_says_so():
    quiet = StatusParts(day=date(2026, 12, 4), read_only=True, staff=None, narrowed=(), shown=40, total=40,
                        counts={s: 0 for s in Severity})
    assert fitted_status(quiet, lambda severity: "", 80).plain == (
        "4 Dec 2026 read-only view │ all 40 │ urgent 0 today 0 soon 0 info 0")
    assert fitted_status(quiet, lambda severity: "", 37).plain == "4 Dec read-only view │ no open alerts"
    assert fitted_status(quiet, lambda severity: "", 36).plain == "4 Dec read-only │ no open alerts"
