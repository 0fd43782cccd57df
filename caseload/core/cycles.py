"""Cycles from bleeding: which bleeds start a cycle, how long cycles and bleeds last.

Day 1 of a cycle is the first day of light flow or more. Spotting alone starts nothing, and
a bleed marked mid-cycle (intermenstrual) is left out entirely. Bleeding days with at most
`bleed_merge_dry_days` dry days between them are one bleed.
"""

from __future__ import annotations

from bisect import bisect_right
from dataclasses import dataclass
from datetime import date, timedelta

from caseload.core.model import MIDCYCLE_FLAG, Flow, Kind, Observation
from caseload.core.settings import Protocol

# Flow words that can start a cycle (light or more).
STARTING_FLOWS = frozenset({Flow.LIGHT.value, Flow.MODERATE.value, Flow.HEAVY.value})



def cycle_day(start: date, day: date) -> int:
    """The cycle day of `day` in a cycle that began on `start`: the first day of bleeding is day 1."""
    return (day - start).days + 1

@dataclass(frozen=True)
class Bleed:
    """One menstrual bleed: from its first day of light flow or more to its last bleeding day."""

    start: date
    end: date

    @property
    def days(self) -> int:
        return (self.end - self.start).days + 1


@dataclass(frozen=True)
class CycleSpan:
    """A cycle's dates: its day 1, its bleed, and the next cycle's day 1 (None while it is open)."""

    start: date
    bleed: Bleed
    next_start: date | None

    @property
    def is_open(self) -> bool:
        return self.next_start is None

    @property
    def length(self) -> int | None:
        return None if self.next_start is None else (self.next_start - self.start).days

    @property
    def end(self) -> date | None:
        """The cycle's last day (the day before the next day 1)."""
        return None if self.next_start is None else self.next_start - timedelta(days=1)


def menstrual_bleeds(observations: list[Observation], protocol: Protocol) -> list[Bleed]:
    """The bleeds that start cycles, oldest first."""
    flows: dict[date, bool] = {}
    for obs in observations:
        if obs.kind != Kind.BLEED or MIDCYCLE_FLAG in obs.flags or obs.value.word is None:
            continue
        flows[obs.day] = flows.get(obs.day, False) or obs.value.word in STARTING_FLOWS
    bleeds: list[Bleed] = []
    run: list[date] = []
    for day in sorted(flows):
        if run and (day - run[-1]).days > protocol.bleed_merge_dry_days + 1:
            _close_run(run, flows, bleeds)
            run = []
        run.append(day)
    _close_run(run, flows, bleeds)
    return bleeds


def _close_run(run: list[date], flows: dict[date, bool], bleeds: list[Bleed]) -> None:
    starts = [day for day in run if flows[day]]
    if starts:
        bleeds.append(Bleed(starts[0], run[-1]))


def cycle_spans(bleeds: list[Bleed]) -> list[CycleSpan]:
    """One span per bleed, oldest first; the last one is open."""
    nexts = [b.start for b in bleeds[1:]] + [None]
    return [CycleSpan(b.start, b, n) for b, n in zip(bleeds, nexts)]


def group_by_cycle(observations: list[Observation], spans: list[CycleSpan]) -> list[list[Observation]]:
    """The observations of each cycle, in the order given; days before the first cycle are dropped."""
    starts = [span.start for span in spans]
    groups: list[list[Observation]] = [[] for _ in spans]
    for obs in observations:
        index = bisect_right(starts, obs.day) - 1
        if index >= 0:
            groups[index].append(obs)
    return groups
