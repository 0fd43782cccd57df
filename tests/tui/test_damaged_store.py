"""A damaged store said at once: the interface opens without reading the whole file, draws the list,
then runs the whole-file check a first save would pay, in a worker, and says what it found."""

from __future__ import annotations

from caseload.tui.screens.caseload import STORE_CHECK_DELAY_S
from tests.robustness.robust_support import damage_index_page
from tests.tui.conftest import settle


async def launched(pilot) -> None:
    """The list drawn, then the store check it starts a moment later, done."""
    await settle(pilot)
    await pilot.pause(STORE_CHECK_DELAY_S)
    await settle(pilot)


async def test_a_damaged_store_is_said_once_the_list_is_drawn(caseload_file, app_as):
    damage_index_page(caseload_file)  # a page the list never reads: only the whole-file check finds it
    app = app_as("nell")
    async with app.run_test(size=(100, 30)) as pilot:
        await launched(pilot)
        mine = [line for line in app.roster if line.patient.nurse_id == "nell"]  # a nurse's list starts at hers
        assert app.screen.query_one("#caseload").row_count == len(mine) > 0  # the list is drawn
        damage = [n for n in app._notifications if n.title == "Store damaged"]
        assert len(damage) == 1 and damage[0].severity == "error"
        said = damage[0].message
        assert said.startswith(f"{caseload_file} is damaged (") and "\n" not in said
        assert said.endswith("run 'caseload check', then restore a backup with 'caseload restore FILE'")


async def test_the_check_at_launch_spares_the_first_save_its_own(app_as):
    app = app_as("nell")
    async with app.run_test(size=(100, 30)) as pilot:
        await launched(pilot)
        assert not any(n.severity == "error" for n in app._notifications)  # a sound store: nothing said
        ran: list[str] = []
        app.clinic.store.db.conn.set_trace_callback(ran.append)
        app.clinic.log("P0001", "symptom", "mild cramps")
        app.clinic.log("P0001", "note", "called back")
        assert ran and not any("quick_check" in statement for statement in ran)
