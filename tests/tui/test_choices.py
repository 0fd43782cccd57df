"""What a typed word picks in the forms: a nurse by id or name, a plan or status by its start."""

from __future__ import annotations

import pytest

from caseload.core.model import PatientStatus, Plan, Role, Staff
from caseload.core.parse import InputError
from caseload.tui.choices import active_nurses, pick_nurse, pick_word

STAFF = [Staff("ines", "Inês Carvalho", Role.NURSE), Staff("tomasz", "Tomasz Wróbel", Role.NURSE),
         Staff("amara", "Amara Okafor", Role.NURSE), Staff("isla", "Isla Brandt", Role.NURSE), Staff("ida", "Ida Old", Role.NURSE, active=False),
         Staff("ruth", "Ruth Abernethy", Role.PHONE)]
NURSES = active_nurses(STAFF)


def test_only_active_nurses_are_offered():
    assert [n.id for n in NURSES] == ["ines", "tomasz", "amara", "isla"]


@pytest.mark.parametrize("typed, nurse", [
    ("ines", "ines"), ("TOM", "tomasz"), ("carv", "ines"), ("ok", "amara"),
    ("wrob", "tomasz"),  # accents need not be typed (Wróbel)
    ("", None), ("   ", None),
])
def test_a_nurse_is_picked_by_id_or_name(typed, nurse):
    picked = pick_nurse(NURSES, typed)
    assert (picked.id if picked else None) == nurse


def test_an_unknown_or_inactive_nurse_and_an_ambiguous_start_are_refused_in_one_line():
    with pytest.raises(InputError, match="no active nurse 'ruth': type one of ines, tomasz, amara, isla"):
        pick_nurse(NURSES, "ruth")
    with pytest.raises(InputError, match="no active nurse 'ida'"):
        pick_nurse(NURSES, "ida")
    with pytest.raises(InputError, match="nurse 'i' fits ines, isla: type more"):
        pick_nurse(NURSES, "i")


def test_plan_and_status_words_and_their_starts():
    assert pick_word(Plan, "ovu", "plan") is Plan.OVULATION_INDUCTION
    assert pick_word(Plan, "Insemination", "plan") is Plan.INSEMINATION
    assert pick_word(PatientStatus, "pr", "status") is PatientStatus.PREGNANT
    with pytest.raises(InputError, match="status 'p' not accepted: use one of active, paused, discharged, pregnant"):
        pick_word(PatientStatus, "p", "status")  # paused or pregnant: the whole word is needed
