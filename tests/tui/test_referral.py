"""The record's pack key: a nurse writes the referral pack or the FHIR bundle; phone staff are not offered it."""

from __future__ import annotations

import json
import stat

import pytest

from caseload.tui.screens.referral import ReferralDialog
from tests.tui.conftest import fill, settle
from tests.tui.test_record import open_record


async def press_p_in_the_record(pilot):
    """Open P0001's record and press the pack key; the screen on top afterwards."""
    await settle(pilot)
    await open_record(pilot, "P0001")
    await pilot.press("p")
    await settle(pilot)
    return pilot.app.screen


async def write_to(pilot, dialog: ReferralDialog, out) -> None:
    field = dialog.query_one("#out")
    field.focus()
    await pilot.pause()
    await fill(pilot, str(out))
    await pilot.press("enter")
    await settle(pilot)


@pytest.mark.parametrize("fmt, head", [("pdf", b"%PDF-"), ("html", b"<!DOCTYPE html>"), ("json", b"{")])
async def test_a_nurse_writes_the_chosen_file_owner_only_and_it_is_audited(app_as, service_ctx, tmp_path, fmt, head):
    out = tmp_path / f"P0001.{fmt}"
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        dialog = await press_p_in_the_record(pilot)
        assert isinstance(dialog, ReferralDialog)
        dialog.query_one("#format").value = fmt
        await pilot.pause()
        await write_to(pilot, dialog, out)
        assert not isinstance(pilot.app.screen, ReferralDialog)
    assert out.read_bytes().startswith(head) and stat.S_IMODE(out.stat().st_mode) == 0o600
    action = "fhir.export" if fmt == "json" else "referral.pack"
    (row,) = service_ctx("ada").store.audit.rows(action)
    assert (row.by_staff, row.row_id) == ("nell", "P0001")
    if fmt == "json":
        assert json.loads(out.read_text())["type"] == "collection"


async def test_a_refusal_stays_in_the_dialog_as_one_line(app_as, tmp_path):
    out = tmp_path / "taken.pdf"
    out.write_text("keep")
    app = app_as("nell")
    async with app.run_test(size=(80, 24)) as pilot:
        dialog = await press_p_in_the_record(pilot)
        await write_to(pilot, dialog, out)
        assert pilot.app.screen is dialog
        # The interface cannot replace a file: its refusal offers another name, never the command line's --force.
        assert dialog.query_one("#check").render().plain == (
            f"Not written: {out} exists already: the interface keeps it, choose another file name")
    assert out.read_text() == "keep"


async def test_phone_staff_are_not_offered_the_pack(app_as):
    app = app_as("phil")
    async with app.run_test(size=(80, 24)) as pilot:
        assert not isinstance(await press_p_in_the_record(pilot), ReferralDialog)
