"""Cycles from bleeding: starts, merging, mid-cycle bleeds, lengths and the open cycle."""

from datetime import date, timedelta

import pytest

from caseload.core.cycles import cycle_spans, group_by_cycle, menstrual_bleeds, sort_bleeding
from caseload.core.model import Kind, Observation, Value
from caseload.core.settings import DEFAULT_PROTOCOL as P
from caseload.core.settings import Protocol

D0 = date(2024, 1, 1)


def day(n: int) -> date:
    return D0 + timedelta(days=n)


def bleed(n: int, flow: str = "moderate", *flags: str) -> Observation:
    return Observation(day(n), Kind.BLEED, Value(word=flow), tuple(flags))


def test_day_one_is_the_first_day_of_light_flow_or_more():
    # Common practice (design rule): spotting before the flow belongs to the previous cycle.
    bleeds = menstrual_bleeds([bleed(0, "spotting"), bleed(1, "spotting"), bleed(2, "light"), bleed(3)], P)
    assert [(b.start, b.end) for b in bleeds] == [(day(2), day(3))]


def test_spotting_alone_starts_nothing():
    assert menstrual_bleeds([bleed(0, "spotting"), bleed(1, "spotting")], P) == []


def test_flow_days_with_two_dry_days_between_are_one_bleed():
    # Common practice: at most 2 dry days inside one bleed; trailing spotting counts in its length.
    bleeds = menstrual_bleeds([bleed(0, "heavy"), bleed(1), bleed(4, "light"), bleed(5, "spotting")], P)
    assert len(bleeds) == 1 and bleeds[0].days == 6


def test_three_dry_days_split_the_bleed():
    bleeds = menstrual_bleeds([bleed(0, "heavy"), bleed(1), bleed(15, "light")], P)
    assert [b.start for b in bleeds] == [day(0), day(15)]


@pytest.mark.parametrize("gap, cycle", [(3, False), (4, False), (5, True), (8, True)])
def test_a_cycle_shorter_than_the_minimum_is_intermenstrual_bleeding(gap, cycle):
    # Minimum cycle of 10 days (protocol default, from memory): a flow starting 8 or 9 days after a
    # day 1 (3 or 4 dry days after a 5-day bleed) is intermenstrual; from 10 days on it starts a cycle.
    obs = [bleed(0), bleed(1), bleed(2), bleed(3), bleed(4), bleed(4 + gap + 1), bleed(4 + gap + 2)]
    sorted_ = sort_bleeding(obs, P)
    second = day(4 + gap + 1)
    assert [b.start for b in sorted_.menstrual] == ([day(0), second] if cycle else [day(0)])
    assert [b.start for b in sorted_.intermenstrual] == ([] if cycle else [second])


def test_the_minimum_cycle_is_a_protocol_setting():
    obs = [bleed(0), bleed(8), bleed(9)]
    assert len(sort_bleeding(obs, Protocol(min_cycle_days=8)).menstrual) == 2
    assert len(sort_bleeding(obs, P).menstrual) == 1


@pytest.mark.parametrize("dry", [1, 2])
@pytest.mark.parametrize("spotting", [1, 2, 4])
def test_spotting_after_dry_days_ends_the_bleed(dry, spotting):
    # Common practice: flow, dry days, then spotting is not one long bleed (5 flow days, 2 dry,
    # 2 spotting is a 5-day bleed, not 9 days).
    obs = [bleed(n) for n in range(5)] + [bleed(5 + dry + n, "spotting") for n in range(spotting)]
    bleeds = menstrual_bleeds(obs, P)
    assert [(b.start, b.end, b.days) for b in bleeds] == [(day(0), day(4), 5)]


def test_light_flow_after_two_dry_days_still_joins_the_bleed():
    # Design rule: flow days separated by at most 2 dry days are one bleed.
    bleeds = menstrual_bleeds([bleed(0), bleed(1), bleed(4, "light"), bleed(5, "spotting")], P)
    assert [(b.start, b.end) for b in bleeds] == [(day(0), day(5))]


def test_the_merge_gap_is_a_protocol_setting():
    obs = [bleed(0), bleed(2)]
    assert len(sort_bleeding(obs, Protocol(bleed_merge_dry_days=0, min_cycle_days=5)).menstrual) == 1
    assert len(sort_bleeding(obs, Protocol(bleed_merge_dry_days=0, min_cycle_days=5)).intermenstrual) == 1
    assert menstrual_bleeds(obs, P)[0].days == 3


def test_a_midcycle_bleed_starts_nothing():
    obs = [bleed(0), bleed(1), bleed(14, "light", "midcycle"), bleed(15, "moderate", "midcycle"), bleed(28)]
    spans = cycle_spans(menstrual_bleeds(obs, P))
    assert [s.start for s in spans] == [day(0), day(28)]
    assert spans[0].length == 28 and spans[0].bleed.days == 2


def test_lengths_and_the_open_cycle():
    obs = [bleed(0), bleed(29), bleed(30), bleed(56)]
    spans = cycle_spans(menstrual_bleeds(obs, P))
    assert [s.length for s in spans] == [29, 27, None]
    assert spans[-1].is_open and not spans[0].is_open
    assert spans[0].end == day(28)


def test_observations_are_grouped_by_cycle_and_earlier_ones_dropped():
    temp = lambda n: Observation(day(n), Kind.TEMP, Value(number=36.5))
    obs = [temp(-3), bleed(0), temp(5), bleed(28), temp(28), temp(40)]
    spans = cycle_spans(menstrual_bleeds(obs, P))
    groups = group_by_cycle(obs, spans)
    assert [[o.day for o in g if o.kind == Kind.TEMP] for g in groups] == [[day(5)], [day(28), day(40)]]
