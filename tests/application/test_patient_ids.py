"""The id a registration form proposes: the one after the highest numbered id, never a taken one."""

from __future__ import annotations

from hypothesis import given
from hypothesis import strategies as st

from caseload.application.patients import proposed_id
from caseload.core.parse import parse_id


def test_the_next_number_keeps_the_prefix_and_width():
    # Worked examples (common practice: clinic numbers keep their prefix and zero padding).
    assert proposed_id([]) == "P0001"
    assert proposed_id(["P0001", "P0002", "P0041"]) == "P0042"
    assert proposed_id(["P0009", "P0010"]) == "P0011"
    assert proposed_id(["P9999"]) == "P10000"  # widens rather than wrapping round
    assert proposed_id(["P0007", "smith-2", "P0003"]) == "P0008"  # ids of other shapes are left alone
    assert proposed_id(["A12", "B7"]) == "A13"


def test_the_highest_number_wins_whatever_its_prefix_or_width():
    assert proposed_id(["P0041", "p0042"]) == "p0043"
    assert proposed_id(["P0041", "P43"]) == "P44"


ids = st.from_regex(r"[A-Za-z]{0,3}[0-9]{1,6}|[a-z]{1,5}-[a-z]{1,5}", fullmatch=True)


@given(st.lists(ids, max_size=30))
def test_the_proposal_is_free_and_a_valid_id(taken):
    proposal = proposed_id(taken)
    assert proposal.lower() not in {t.lower() for t in taken}
    assert parse_id(proposal, "patient") == proposal
