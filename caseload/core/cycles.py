"""Cycles from bleeding: which bleeds start a cycle, how long cycles and bleeds last.

Day 1 of a cycle is the first day of light flow or more. Spotting alone starts nothing, and
a bleed marked mid-cycle (intermenstrual) starts no cycle. Bleeding days with at most
`bleed_merge_dry_days` dry days between them are one bleed. A bleed in pregnancy, or lochia
after it, starts no cycle either.
"""

from __future__ import annotations

from bisect import bisect_right
from dataclasses import dataclass
from datetime import date, timedelta

from caseload.core.model import MIDCYCLE_FLAG, Flow, Kind, Observation
from caseload.core.settings import Protocol

# Flow words that can start a cycle (light or more).
STARTING_FLOWS = frozenset({Flow.LIGHT.value, Flow.MODERATE.value, Flow.HEAVY.value})
FLOW_RANK = {flow.value: rank for rank, flow in enumerate(Flow)}



def cycle_day(start: date, day: date) -> int:
    """The cycle day of `day` in a cycle that began on `start`: the first day of bleeding is day 1."""
    return (day - start).days + 1

@dataclass(frozen=True)
class Bleed:
    """One bleed: from its first day of light flow or more to its last bleeding day."""

    start: date
    end: date
    flow_days: int = 0  # days of light flow or more
    heavy_days: int = 0

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


@dataclass(frozen=True)
class Bleeding:
    """Every bleed of a chart, sorted by what it means."""

    menstrual: tuple[Bleed, ...]  # the bleeds that start cycles
    intermenstrual: tuple[Bleed, ...]  # flagged mid-cycle, or too soon after a day 1 to start a cycle
    in_pregnancy: tuple[Bleed, ...]  # during a pregnancy, or lochia after it


def sort_bleeding(
    observations: list[Observation], protocol: Protocol, pregnancies: tuple[tuple[date, date | None], ...] = ()
) -> Bleeding:
    """Sort the chart's bleeds. `pregnancies` are (first, last) days in which a bleed starts no
    cycle (last None while the pregnancy goes on); a flow sooner than `min_cycle_days` after the
    last day 1 is shown as intermenstrual rather than as a cycle too short to be one."""
    flagged = _runs(observations, protocol, midcycle=True)
    menstrual: list[Bleed] = []
    between = list(flagged)
    pregnant: list[Bleed] = []
    for bleed in _runs(observations, protocol, midcycle=False):
        if any(first <= bleed.start and (last is None or bleed.start <= last) for first, last in pregnancies):
            pregnant.append(bleed)
        elif menstrual and (bleed.start - menstrual[-1].start).days < protocol.min_cycle_days:
            between.append(bleed)
        else:
            menstrual.append(bleed)
    return Bleeding(tuple(menstrual), tuple(sorted(between, key=lambda b: b.start)), tuple(pregnant))


def menstrual_bleeds(observations: list[Observation], protocol: Protocol) -> list[Bleed]:
    """The bleeds that start cycles, oldest first."""
    return list(sort_bleeding(observations, protocol).menstrual)


def _runs(observations: list[Observation], protocol: Protocol, midcycle: bool) -> list[Bleed]:
    """Bleeds of the flagged (`midcycle`) or the unflagged entries. Flow days with at most
    `bleed_merge_dry_days` dry days between them are one bleed; spotting after dry days ends the
    bleed rather than stretching it (common practice)."""
    flows: dict[date, str] = {}
    for obs in observations:
        if obs.kind != Kind.BLEED or (MIDCYCLE_FLAG in obs.flags) != midcycle or obs.value.word is None:
            continue
        flows[obs.day] = max(flows.get(obs.day, obs.value.word), obs.value.word, key=FLOW_RANK.__getitem__)
    bleeds: list[Bleed] = []
    run: list[date] = []
    for day in sorted(flows):
        gap = (day - run[-1]).days if run else 1
        if gap > protocol.bleed_merge_dry_days + 1 or (gap > 1 and flows[day] not in STARTING_FLOWS):
            _close_run(run, flows, bleeds)
            run = []
        run.append(day)
    _close_run(run, flows, bleeds)
    return bleeds


def _close_run(run: list[date], flows: dict[date, str], bleeds: list[Bleed]) -> None:
    starts = [day for day in run if flows[day] in STARTING_FLOWS]
    if starts:
        heavy = sum(flows[day] == Flow.HEAVY.value for day in run)
        bleeds.append(Bleed(starts[0], run[-1], len(starts), heavy))


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
