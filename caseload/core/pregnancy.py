"""Pregnancy: due date, gestational age and the serial serum hCG trend."""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date, datetime, time, timedelta

from caseload.core.cycles import Bleed
from caseload.core.model import Kind, Observation, PatientStatus
from caseload.core.settings import Protocol

POSITIVE = "positive"
NEGATIVE = "negative"
# A serum value from which a test counts as positive (common practice).
HCG_POSITIVE_IU_L = 25.0
# Pregnancy lasts 280 days from the LMP (40 weeks); conception is about 14 days after it.
LMP_TO_EDD_DAYS = 280
OVULATION_TO_EDD_DAYS = 266
# A serum sample logged without a time is placed at midday.
DEFAULT_SAMPLE_TIME = time(12, 0)


@dataclass(frozen=True)
class HcgValue:
    taken: datetime
    iu_l: float


@dataclass(frozen=True)
class HcgTrend:
    """Log-linear least-squares fit of the recent serum values."""

    values: tuple[HcgValue, ...]  # the values fitted
    rise_48h: float  # fraction: 0.53 means a 53% rise per 48 h; negative when falling
    doubling_days: float | None  # None unless rising
    below_minimum: bool  # rise under `hcg_min_rise_48h` (Barnhart 2004)


@dataclass(frozen=True)
class Pregnancy:
    lmp: date | None
    edd: date | None
    edd_method: str | None  # one of EDD_METHODS
    gestational_age_days: int | None
    gestational_age: str | None  # e.g. "6w3d"
    positive_test: date | None  # first positive hCG of the cycle
    hcg: tuple[HcgValue, ...]  # every serum value of the cycle, oldest first
    hcg_trend: HcgTrend | None
    bleeds: tuple[Bleed, ...] = ()  # bleeding since the pregnancy began


@dataclass(frozen=True)
class Episode:
    """One pregnancy: from its first positive hCG (or the day the status was set pregnant) to the
    negative hCG or the nurse's status change that ended it."""

    start: date
    end: date | None  # None while it goes on
    ended_by: str | None  # in words, e.g. "serum hCG 3 IU/L on 2024-06-02"


@dataclass(frozen=True)
class Discounted:
    """A positive urine hCG taken as the trigger injection's, not as a pregnancy."""

    day: date
    trigger_day: date


@dataclass(frozen=True)
class HcgPair:
    """Two serum values compared by their log-linear rise scaled to 48 h."""

    first: HcgValue
    second: HcgValue
    hours: float
    rise_48h: float | None  # fraction, negative when falling; None when both carry the same time
    falling: bool


NAEGELE = "naegele"  # LMP + 280 days
NAEGELE_ADJUSTED = "naegele-adjusted"  # LMP + 280 days + (usual cycle length - 28)
OVULATION = "ovulation"  # ovulation + 266 days
# Every rule `due_date` may name: what shows or exports a due date covers each of them.
EDD_METHODS: tuple[str, ...] = (NAEGELE, NAEGELE_ADJUSTED, OVULATION)
# Naegele's rule assumes a 28-day cycle with ovulation on day 14.
NAEGELE_CYCLE_DAYS = 28


def naegele(lmp: date) -> date:
    """Due date by Naegele's rule, taken as LMP + 280 days.

    The bedside form, LMP + 1 year - 3 months + 7 days, lands 0 to 3 days later than 280 days
    depending on the lengths of the months crossed (Feb and the leap day among them); the day
    count is the rule's intent, so it is used.
    """
    return lmp + timedelta(days=LMP_TO_EDD_DAYS)


def due_date(lmp: date | None, ovulation: date | None, usual_cycle: int | None) -> tuple[date | None, str | None]:
    """The due date and the rule that gave it: ovulation + 266 days when ovulation is dated, else
    Naegele's rule, moved by the usual cycle's difference from 28 days when cycles are regular
    (`usual_cycle` is None otherwise), since ovulation comes that much later or sooner."""
    if ovulation is not None:
        return from_ovulation(ovulation), OVULATION
    if lmp is None:
        return None, None
    if usual_cycle is None or usual_cycle == NAEGELE_CYCLE_DAYS:
        return naegele(lmp), NAEGELE
    return naegele(lmp) + timedelta(days=usual_cycle - NAEGELE_CYCLE_DAYS), NAEGELE_ADJUSTED


def from_ovulation(ovulation: date) -> date:
    return ovulation + timedelta(days=OVULATION_TO_EDD_DAYS)


def weeks_days(days: int) -> str:
    return f"{days // 7}w{days % 7}d"


def serum_values(observations: list[Observation]) -> tuple[HcgValue, ...]:
    values = []
    for obs in observations:
        if obs.kind == Kind.HCG and obs.value.number is not None and obs.value.number > 0:
            values.append(HcgValue(datetime.combine(obs.day, _sample_time(obs.time)), obs.value.number))
    return tuple(sorted(values, key=lambda v: v.taken))


def _sample_time(text: str | None) -> time:
    if not text:
        return DEFAULT_SAMPLE_TIME
    hours, minutes = text.split(":")
    return time(int(hours), int(minutes))


def is_positive(obs: Observation) -> bool:
    return obs.kind == Kind.HCG and (
        obs.value.word == POSITIVE or (obs.value.number is not None and obs.value.number >= HCG_POSITIVE_IU_L)
    )


def is_negative(obs: Observation, protocol: Protocol) -> bool:
    """A negative urine test, or a serum value fallen to baseline."""
    return obs.kind == Kind.HCG and (
        obs.value.word == NEGATIVE or (obs.value.number is not None and obs.value.number < protocol.hcg_baseline_iu_l)
    )


def _trigger_before(obs: Observation, triggers: list[date], protocol: Protocol) -> date | None:
    """The trigger a positive urine test may only echo: hCG injected to trigger ovulation keeps a
    urine test positive for up to about two weeks (common practice)."""
    if obs.value.word != POSITIVE:
        return None  # a serum number is read by its trend, not discounted
    recent = [t for t in triggers if 0 <= (obs.day - t).days <= protocol.trigger_hcg_days]
    return max(recent, default=None)


def episodes(
    observations: list[Observation], status: PatientStatus, status_since: date | None, protocol: Protocol
) -> tuple[tuple[Episode, ...], tuple[Discounted, ...]]:
    """The chart's pregnancies, oldest first, and the positive tests discounted as a trigger's.

    A pregnancy begins with a positive hCG, or on the day a nurse set the status pregnant; only a
    negative urine test, a serum value under baseline, or a nurse setting the status back to
    active on or after its start ends it: a bleed alone never does.
    """
    triggers = sorted(o.day for o in observations if o.kind == Kind.TRIGGER)
    tests = sorted((o for o in observations if o.kind == Kind.HCG), key=lambda o: (o.day, o.time or ""))
    found: list[Episode] = []
    discounted: list[Discounted] = []
    start: date | None = None
    for obs in tests:
        if start is None and is_positive(obs):
            trigger = _trigger_before(obs, triggers, protocol)
            if trigger is None:
                start = obs.day
            else:
                discounted.append(Discounted(obs.day, trigger))
        elif start is not None and obs.day > start and is_negative(obs, protocol):
            found.append(Episode(start, obs.day, f"hCG {obs.value.word or f'{obs.value.number:g} IU/L'} on {obs.day.isoformat()}"))
            start = None
    ended_since_status = bool(found) and status_since is not None and found[-1].end >= status_since
    if start is None and status is PatientStatus.PREGNANT and status_since is not None and not ended_since_status:
        start = status_since
    if start is not None:
        if status is PatientStatus.ACTIVE and status_since is not None and status_since >= start:
            found.append(Episode(start, status_since, f"status set to active on {status_since.isoformat()}"))
        else:
            found.append(Episode(start, None, None))
    return tuple(found), tuple(discounted)


def hcg_trend(values: tuple[HcgValue, ...], today: date, protocol: Protocol) -> HcgTrend | None:
    """Rise per 48 h from a log-linear fit over the last `hcg_fit_days` days; needs two distinct days."""
    since = today - timedelta(days=protocol.hcg_fit_days - 1)
    recent = tuple(v for v in values if v.taken.date() >= since)
    if len({v.taken.date() for v in recent}) < 2:
        return None
    origin = recent[0].taken
    hours = [(v.taken - origin).total_seconds() / 3600 for v in recent]
    logs = [math.log(v.iu_l) for v in recent]
    mean_h, mean_l = sum(hours) / len(hours), sum(logs) / len(logs)
    slope = sum((h - mean_h) * (y - mean_l) for h, y in zip(hours, logs)) / sum((h - mean_h) ** 2 for h in hours)
    # Rounded before the comparison, so that a rise of exactly the minimum meets it.
    rise = round(math.exp(48 * slope) - 1, 4)
    doubling = math.log(2) / (24 * slope) if slope > 0 else None
    return HcgTrend(recent, rise, None if doubling is None else round(doubling, 2), rise < protocol.hcg_min_rise_48h)


def rise_per_48h(first: HcgValue, second: HcgValue) -> float:
    """Fractional rise scaled to 48 h as a log-linear (exponential) change between two samples.

    The minimum rise over any interval scales the same way: the 48 h minimum m becomes
    (1 + m) ** (hours / 48) - 1, so 53% in 2 days is a factor sqrt(1.53) = 1.237 a day, Barnhart
    2004's 24% in 1 day, and 1.53 ** 1.5 - 1 = 89% over 3 days.
    """
    hours = (second.taken - first.taken).total_seconds() / 3600
    return round((second.iu_l / first.iu_l) ** (48 / hours) - 1, 4)


def abnormal_pairs(values: tuple[HcgValue, ...], protocol: Protocol) -> list[HcgPair]:
    """Each serum value compared with the latest earlier one at least `hcg_pair_min_hours` before
    it (closer samples are bridged, not skipped), whatever the gap: the pairs rising less than
    the minimum per 48 h; and any fall from the value just before, however soon (Barnhart 2004),
    even one logged for the same time (two results of one day without times, in the order logged):
    such a pair has no interval to scale, so no rate."""
    found = []
    for index, second in enumerate(values):
        earlier = values[:index]
        apart = [v for v in earlier if (second.taken - v.taken).total_seconds() >= protocol.hcg_pair_min_hours * 3600]
        if earlier and earlier[-1].iu_l > second.iu_l:
            first = earlier[-1]
        elif apart:
            first = apart[-1]
        else:
            continue
        falling = second.iu_l < first.iu_l
        rise = None if first.taken == second.taken else rise_per_48h(first, second)
        if falling or (rise is not None and rise < protocol.hcg_min_rise_48h):
            hours = round((second.taken - first.taken).total_seconds() / 3600, 1)
            found.append(HcgPair(first, second, hours, rise, falling))
    return found


def pregnancy(
    observations: list[Observation],
    lmp: date | None,
    ovulation: date | None,
    episode: Episode | None,
    status_pregnant: bool,
    usual_cycle: int | None,
    bleeds: tuple[Bleed, ...],
    today: date,
    protocol: Protocol,
) -> Pregnancy | None:
    """Pregnancy details while a pregnancy goes on (a positive hCG not yet ended, or the status).

    `observations` are those of the pregnancy's cycle; `usual_cycle` is the patient's usual cycle
    length when her cycles are regular, else None; `bleeds` are those since it began."""
    ongoing = episode is not None and episode.end is None
    if not ongoing and not status_pregnant:
        return None
    edd, method = due_date(lmp, ovulation, usual_cycle)
    age = None if edd is None else LMP_TO_EDD_DAYS - (edd - today).days
    values = serum_values(observations)
    tested = [o.day for o in observations if is_positive(o) and episode is not None and o.day >= episode.start]
    return Pregnancy(
        lmp=lmp,
        edd=edd,
        edd_method=method,
        gestational_age_days=age,
        gestational_age=None if age is None else weeks_days(age),
        positive_test=min(tested, default=None),
        hcg=values,
        hcg_trend=hcg_trend(values, today, protocol),
        bleeds=bleeds,
    )
