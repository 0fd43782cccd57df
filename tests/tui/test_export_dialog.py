"""The list's export key: the proposed file follows the week and the format until a name is typed,
and a file already there is kept, in the interface's own words."""

from __future__ import annotations

from pathlib import Path

from caseload.tui.screens.caseload import CaseloadScreen
from caseload.tui.screens.export import ExportDialog
from tests.tui.conftest import burst, fill, settle


async def open_export(pilot) -> ExportDialog:
    await settle(pilot)
    await pilot.press("e")
    await pilot.pause()
    dialog = pilot.app.screen
    assert isinstance(dialog, ExportDialog)
    return dialog


async def type_into(pilot, dialog: ExportDialog, field: str, text: str) -> None:
    dialog.query_one(field).focus()
    await pilot.pause()
    await fill(pilot, text)


async def test_the_proposed_file_follows_the_week_and_the_format_until_a_name_is_typed(app_as, tmp_path):
    home = Path.home()
    async with app_as("sue").run_test(size=(80, 24)) as pilot:
        dialog = await open_export(pilot)
        out = dialog.query_one("#out")
        # The last whole ISO week before Tuesday 1 Dec 2026 is 2026-W48 (23-29 Nov); xlsx by default.
        assert out.value == str(home / "caseload-summary-2026-W48.xlsx")
        await type_into(pilot, dialog, "#week", "2026-W47")
        assert out.value == str(home / "caseload-summary-2026-W47.xlsx")
        dialog.query_one("#format").value = "csv"  # a folder of files: no suffix
        await pilot.pause()
        assert out.value == str(home / "caseload-summary-2026-W47")
        chosen = str(tmp_path / "for-the-board")
        await type_into(pilot, dialog, "#out", chosen)
        await type_into(pilot, dialog, "#week", "2026-W46")
        dialog.query_one("#format").value = "json"
        await pilot.pause()
        assert out.value == chosen  # the name typed is the user's: never replaced


async def test_an_existing_file_is_kept_and_the_dialog_offers_another_name_not_force(app_as, service_ctx, tmp_path):
    out = tmp_path / "week.json"
    out.write_text("last week's, kept")
    async with app_as("sue").run_test(size=(80, 24)) as pilot:
        dialog = await open_export(pilot)
        dialog.query_one("#format").value = "json"
        await pilot.pause()
        await type_into(pilot, dialog, "#out", str(out))
        await pilot.press("enter")
        await settle(pilot)
        assert pilot.app.screen is dialog
        said = f"{out} exists already: the interface keeps it, choose another file name"
        assert dialog.query_one("#check").render().plain == f"Not exported: {said}"
        notes = [n.message for n in pilot.app._notifications]
        assert said in notes and not any("--force" in n for n in notes)
    assert out.read_text() == "last week's, kept"
    assert service_ctx("ada").store.audit.rows("summary.export") == []


async def test_e_and_enter_in_one_burst_export_what_is_offered_and_open_nothing_behind(app_as, tmp_path, monkeypatch):
    monkeypatch.setenv("HOME", str(tmp_path))
    async with app_as("sue").run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await burst(pilot, "e", "enter")
        await settle(pilot)
        assert isinstance(pilot.app.screen, CaseloadScreen)  # the dialog closed; no record opened behind it
    assert (tmp_path / "caseload-summary-2026-W48.xlsx").is_file()


async def test_a_week_typed_in_one_burst_after_e_is_the_week_exported(app_as, tmp_path, monkeypatch):
    monkeypatch.setenv("HOME", str(tmp_path))
    async with app_as("sue").run_test(size=(80, 24)) as pilot:
        await settle(pilot)
        await burst(pilot, "e", *"2026-W47", "enter")
        await settle(pilot)
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith("caseload-summary")] == ["caseload-summary-2026-W47.xlsx"]
