"""The invented demo caseload opens on the list with the service's patients and cycle days."""

from __future__ import annotations

from caseload.application.caseload_view import list_caseload
from caseload.application.context import Context
from caseload.application.clinic import Clinic, Identity
from caseload.tui.app import make_app
from caseload.tui.widgets.caseload_table import CaseloadTable
from tests.tui.conftest import settle
from tests.tui.fixture_store import TODAY



async def test_demo_list_shows_every_demo_patient_with_its_cycle_day(demo):
    lines = list_caseload(Context(demo.store, demo.admin, TODAY))
    app = make_app(Clinic(demo.store, Identity(demo.admin.os_account), date_of_record=TODAY))
    async with app.run_test(size=(120, 40)) as pilot:
        await settle(pilot)
        table = app.screen.query_one(CaseloadTable)
        assert table.patient_ids == [line.patient.id for line in lines]
        for line in lines:
            shown = table.get_cell(line.patient.id, "cd").plain.strip()
            assert shown == ("-" if line.cycle_day is None else str(line.cycle_day))


async def test_the_demo_command_says_on_opening_that_it_kept_what_was_done(opened):
    """`caseload demo` run again opens the store as it was left; the interface says so in one line."""
    from tests.tui.fixture_store import ACCOUNTS

    said = "Opening the demo as you left it (demo.db); 'caseload demo --fresh' rebuilds it dated from today."
    app = make_app(Clinic(opened(), Identity(ACCOUNTS["ada"]), date_of_record=TODAY), notice=said)
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        assert [n.message for n in app._notifications] == [said]
