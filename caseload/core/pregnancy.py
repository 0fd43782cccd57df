"""Pregnancy: due date, gestational age and the serial serum hCG trend."""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date, datetime, time, timedelta

import pendulum

from caseload.core.model import Kind, Observation
from caseload.core.settings import Protocol

POSITIVE = "positive"
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
    edd_method: str | None  # "naegele" (LMP + 280 days) or "ovulation" (ovulation + 266 days)
    gestational_age_days: int | None
    gestational_age: str | None  # e.g. "6w3d"
    positive_test: date | None  # first positive hCG of the cycle
    hcg: tuple[HcgValue, ...]  # every serum value of the cycle, oldest first
    hcg_trend: HcgTrend | None


def naegele(lmp: date) -> date:
    """Due date by Naegele's rule, taken as LMP + 280 days.

    The bedside form, LMP + 1 year - 3 months + 7 days, lands 0 to 3 days later than 280 days
    depending on the lengths of the months crossed (Feb and the leap day among them); the day
    count is the rule's intent, so it is used.
    """
    due = pendulum.Date(lmp.year, lmp.month, lmp.day).add(days=LMP_TO_EDD_DAYS)
    return date(due.year, due.month, due.day)


def from_ovulation(ovulation: date) -> date:
    due = pendulum.Date(ovulation.year, ovulation.month, ovulation.day).add(days=OVULATION_TO_EDD_DAYS)
    return date(due.year, due.month, due.day)


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


def first_positive(observations: list[Observation]) -> date | None:
    days = [
        o.day
        for o in observations
        if o.kind == Kind.HCG
        and (o.value.word == POSITIVE or (o.value.number is not None and o.value.number >= HCG_POSITIVE_IU_L))
    ]
    return min(days, default=None)


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


def pregnancy(
    cycle_observations: list[Observation],
    lmp: date | None,
    ovulation: date | None,
    status_pregnant: bool,
    today: date,
    protocol: Protocol,
) -> Pregnancy | None:
    """Pregnancy details when the patient is recorded pregnant or a positive hCG is logged this cycle."""
    positive = first_positive(cycle_observations)
    if not status_pregnant and positive is None:
        return None
    if ovulation is not None:
        edd, method = from_ovulation(ovulation), "ovulation"
    elif lmp is not None:
        edd, method = naegele(lmp), "naegele"
    else:
        edd = method = None
    age = None if edd is None else LMP_TO_EDD_DAYS - (edd - today).days
    values = serum_values(cycle_observations)
    return Pregnancy(
        lmp=lmp,
        edd=edd,
        edd_method=method,
        gestational_age_days=age,
        gestational_age=None if age is None else weeks_days(age),
        positive_test=positive,
        hcg=values,
        hcg_trend=hcg_trend(values, today, protocol),
    )
