"""Invented charts for the alert rule tests: bleeds, clean temperature curves, tests and scans.

Temperatures are noiseless (36.40 C before ovulation, 36.80 C after), so the three-over-six rule
confirms a shift on the third day after ovulation and dates ovulation exactly.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import date, datetime, time, timedelta

from caseload.core.alerts import Candidate, evaluate
from caseload.core.analysis import Analysis, analyse
from caseload.core.model import Kind, Observation, Patient, PatientStatus, Plan, Scan, Value
from caseload.core.settings import DEFAULT_PROTOCOL, Protocol

LOW, HIGH = 36.40, 36.80
START = date(2026, 3, 2)
BORN = date(1992, 5, 17)  # 34 in 2026: FIGO's 26-41 band


def day(start: date, cycle_day: int) -> date:
    return start + timedelta(days=cycle_day - 1)


@dataclass
class Chart:
    obs: list[Observation] = field(default_factory=list)
    starts: list[date] = field(default_factory=list)

    def bleed(self, first: date, days: int = 5, flow: str = "moderate") -> Chart:
        self.obs += [Observation(first + timedelta(days=i), Kind.BLEED, Value(word=flow)) for i in range(days)]
        self.starts.append(first)
        return self

    def temps(self, first: date, last: date, high_from: date | None = None, skip: set[date] = frozenset(),
              flags: tuple[str, ...] = ()) -> Chart:
        d = first
        while d <= last:
            if d not in skip:
                c = HIGH if high_from is not None and d >= high_from else LOW
                self.obs.append(Observation(d, Kind.TEMP, Value(number=c), flags, "06:30"))
            d += timedelta(days=1)
        return self

    def temp(self, on: date, celsius: float, flags: tuple[str, ...] = ()) -> Chart:
        self.obs.append(Observation(on, Kind.TEMP, Value(number=celsius), flags, "06:30"))
        return self

    def add(self, on: date, kind: Kind, value: Value, at: str | None = None) -> Chart:
        self.obs.append(Observation(on, kind, value, (), at))
        return self

    def lh(self, on: date, word: str = "positive") -> Chart:
        return self.add(on, Kind.LH, Value(word=word))

    def hcg(self, taken: datetime, iu_l: float) -> Chart:
        return self.add(taken.date(), Kind.HCG, Value(number=iu_l), taken.strftime("%H:%M"))

    def scan(self, on: date, *follicles: float) -> Chart:
        return self.add(on, Kind.SCAN, Value(scan=Scan(tuple(sorted(follicles, reverse=True)), 8.0)))

    def cycle(self, start: date, length: int, ovulation_day: int | None, temps: bool = True, bleed_days: int = 5) -> Chart:
        """One complete cycle: a bleed, and temperatures rising the day after `ovulation_day`."""
        self.bleed(start, bleed_days)
        if temps:
            high = None if ovulation_day is None else day(start, ovulation_day + 1)
            self.temps(start, day(start, length), high)
        return self

    def history(self, lengths: list[int], start: date = START, temps: bool = True) -> date:
        """Regular ovulatory cycles with a 14-day luteal phase; returns the next cycle's day 1."""
        for length in lengths:
            self.cycle(start, length, length - 14, temps)
            start += timedelta(days=length)
        return start


def patient(status: PatientStatus = PatientStatus.ACTIVE, plan: Plan = Plan.NATURAL, temps: bool = True,
            born: date = BORN) -> Patient:
    return Patient("P0001", "Test Patient", born, "nurse1", status, plan, START, temps)


def run(chart: Chart, today: date, who: Patient | None = None, protocol: Protocol = DEFAULT_PROTOCOL) -> tuple[Analysis, list[Candidate]]:
    who = who or patient()
    obs = sorted(chart.obs, key=lambda o: o.day)
    analysis = analyse(who, obs, today, protocol)
    return analysis, evaluate(who, analysis, obs, today, protocol)


def kinds(candidates: list[Candidate], raisable_only: bool = True) -> set[str]:
    return {c.kind for c in candidates if c.raisable or not raisable_only}


def of(candidates: list[Candidate], kind: str) -> list[Candidate]:
    return [c for c in candidates if c.kind == kind]


def at(on: date, hour: int = 9) -> datetime:
    return datetime.combine(on, time(hour, 0))


__all__ = ["Chart", "HIGH", "LOW", "START", "at", "day", "kinds", "of", "patient", "run"]
