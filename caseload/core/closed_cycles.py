"""Completed cycles kept between analyses, and the analysis that resumes from them.

A completed cycle's record never changes while the entries it came from stay as they are: it is
computed from its own observations, its span (its day 1 and the next day 1) and the pregnancies
begun in it. So a patient's analysis can start from her kept completed cycles and read only the
open cycle's observations: `resume` gives exactly the `Analysis` that `analyse` gives over the
whole chart, or None when it cannot be sure of that (then the caller analyses the whole chart).

What else the whole chart decides is kept beside each cycle, so nothing is lost with its rows:
the hCG tests and triggers (pregnancies are read over the whole chart), the fever readings (each
one is its own alert episode), the bleeding on its last day (whether she bleeds now, the day a
new cycle begins), the bleeds between periods that began in it, and the state at its end that
decides how the next cycle reads (the last mid-cycle bleeding day, the pregnancies begun so far).
Bleeds in pregnancy are not kept: only those of the latest pregnancy are read, and a pregnancy
begun before the open cycle is never the latest one while that cycle is open (`assemble`). Nor
are follicle scans, serum values for the trend, LH tests or mucus: the analysis reads those of the
open cycle only, and of a completed one only through its record.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass
from datetime import date, timedelta

from caseload.core import cycles as cy
from caseload.core.analysis import Analysis, Chart, CycleRecord, assemble, cycle_records, no_new_cycles
from caseload.core.model import MIDCYCLE_FLAG, Kind, Observation, Patient
from caseload.core.pregnancy import Episode, episodes
from caseload.core.settings import Protocol

# Bump when the computation of a completed cycle's record (or of what is kept beside it) changes:
# kept cycles made by other code are then recomputed, never trusted.
KEPT_FORMAT = 1

Span = tuple[date, date | None]  # a pregnancy's first and last day (None while it goes on)


@dataclass(frozen=True)
class ClosedCycle:
    """One completed cycle as kept, with what the analysis of the whole chart reads from it."""

    record: CycleRecord
    entries_from: date | None  # its entries run from this day (None: from the chart's first entry)
    history: tuple[Observation, ...]  # hCG tests, triggers, fever readings and its last day's bleeding
    intermenstrual: tuple[cy.Bleed, ...]  # bleeds between periods that began in it
    last_flagged: date | None  # the last mid-cycle bleeding day up to its end
    pregnancies: tuple[Span, ...]  # the pregnancies begun before its next day 1, as they stood when kept

    @property
    def next_start(self) -> date:
        return self.record.end + timedelta(days=1)


def kept_key(protocol: Protocol) -> str:
    """What kept cycles depend on besides their entries: the code's format and every protocol
    setting (a protocol change recomputes them all)."""
    return f"{KEPT_FORMAT}:{hashlib.sha256(repr(protocol).encode()).hexdigest()[:16]}"


def resume(
    patient: Patient, kept: tuple[ClosedCycle, ...], open_obs: list[Observation], today: date, protocol: Protocol
) -> Analysis | None:
    """The patient's analysis from her kept completed cycles and the observations from the day
    after the last of them (`open_obs`); the same as `analyse` over the whole chart, or None.

    None when the kept cycles cannot be continued: today before the open cycle, the open cycle's
    day 1 no longer a day 1 (its bleed voided or moved, a pregnancy now covering it), a pregnancy
    begun before the cut that now reads differently (a status change, a negative test after
    it), or mid-cycle bleeding running across the cut. Anything else these observations change
    lies after the cut and is computed here, as `analyse` computes it."""
    cut = kept[-1].next_start
    if today < cut:
        return None
    seen = sorted((o for o in open_obs if cut <= o.day <= today), key=lambda o: o.day)
    history = [o for c in kept for o in c.history]
    found, discounted = episodes(history + seen, patient.status, patient.status_since, protocol)
    if _begun_before(found, cut) != kept[-1].pregnancies:
        return None
    bleeding = cy.sort_bleeding(seen, protocol, no_new_cycles(found, protocol))
    if not bleeding.menstrual or bleeding.menstrual[0].start != cut or _runs_across(kept[-1].last_flagged, seen, protocol):
        return None
    spans = cy.cycle_spans(list(bleeding.menstrual))
    groups = cy.group_by_cycle(seen, spans)
    records = tuple(c.record for c in kept) + cycle_records(spans, groups, today, protocol, found)
    before = tuple(b for c in kept for b in c.intermenstrual)
    chart_bleeding = cy.Bleeding(bleeding.menstrual, before + bleeding.intermenstrual, bleeding.in_pregnancy)
    return assemble(patient, Chart(records, groups[-1], chart_bleeding, found, discounted), seen[-1].day, today, protocol)


def closed_cycles(
    analysis: Analysis, observations: list[Observation], kept: tuple[ClosedCycle, ...], protocol: Protocol
) -> tuple[ClosedCycle, ...]:
    """The completed cycles of `analysis` to keep after `kept` (the cycles it resumed from, or ()
    for an analysis of the whole chart); `observations` are those it was computed from.

    A cycle is kept only where the next analysis can resume after it: trailing cycles are left
    out while mid-cycle bleeding runs across the end of the last one (rare; kept later)."""
    seen = sorted((o for o in observations if o.day <= analysis.today), key=lambda o: o.day)
    flagged = kept[-1].last_flagged if kept else None
    made: list[ClosedCycle] = []
    for index, record in enumerate(analysis.cycles[len(kept) :], start=len(kept)):
        if record.is_open:
            break
        since = None if index == 0 else record.start
        next_start = record.end + timedelta(days=1)
        inside = [o for o in seen if (since is None or since <= o.day) and o.day < next_start]
        flagged = max((o.day for o in inside if _flagged(o)), default=flagged)
        made.append(
            ClosedCycle(
                record=record,
                entries_from=since,
                history=tuple(o for o in inside if _read_across_cycles(o, record.end, protocol)),
                intermenstrual=tuple(
                    b for b in analysis.intermenstrual if (since is None or since <= b.start) and b.start < next_start
                ),
                last_flagged=flagged,
                pregnancies=_begun_before(analysis.episodes, next_start),
            )
        )
    while made and _runs_across(made[-1].last_flagged, [o for o in seen if o.day >= made[-1].next_start], protocol):
        made.pop()
    return tuple(made)


def _read_across_cycles(obs: Observation, last_day: date, protocol: Protocol) -> bool:
    """An observation of a completed cycle that the whole chart's computations still read."""
    if obs.kind in (Kind.HCG, Kind.TRIGGER):
        return True  # pregnancies
    if obs.kind == Kind.TEMP:
        return obs.value.number is not None and obs.value.number >= protocol.fever_c  # the fever alert
    return obs.kind == Kind.BLEED and obs.day == last_day  # bleeding yesterday, when day 1 is today


def _begun_before(found: tuple[Episode, ...], cut: date) -> tuple[Span, ...]:
    return tuple((e.start, e.end) for e in found if e.start < cut)


def _flagged(obs: Observation) -> bool:
    return obs.kind == Kind.BLEED and MIDCYCLE_FLAG in obs.flags and obs.value.word is not None


def _runs_across(last_flagged: date | None, after: list[Observation], protocol: Protocol) -> bool:
    """Whether mid-cycle bleeding before the cut may join a bleed after it (one run of bleeding
    days with at most `bleed_merge_dry_days` dry days between them, as `cycles` joins them)."""
    first = next((o.day for o in after if _flagged(o)), None)
    return last_flagged is not None and first is not None and (first - last_flagged).days <= protocol.bleed_merge_dry_days + 1


def rule_observations(kept: tuple[ClosedCycle, ...], open_obs: list[Observation]) -> list[Observation]:
    """What the alert rules read as the chart's observations when the analysis resumed from kept
    cycles: those of the open cycle, after what completed cycles keep for them (`history`)."""
    return [o for c in kept for o in c.history] + open_obs
