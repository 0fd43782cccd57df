"""Kept completed cycles: resuming from them gives exactly the whole chart's analysis and alerts.

The reference is the analysis of every observation (`analyse`), itself checked against published
values in the other core tests; here each resumed analysis must equal it field for field, and the
alert rules must find the same candidates in both.
"""

from __future__ import annotations

import random
from dataclasses import replace
from datetime import date, timedelta

import pytest

from caseload.core.alerts import evaluate
from caseload.core.analysis import analyse
from caseload.core.closed_cycles import closed_cycles, kept_key, resume, rule_observations
from caseload.core.model import MIDCYCLE_FLAG, Kind, Observation, Patient, PatientStatus, Plan, Value
from caseload.core.settings import DEFAULT_PROTOCOL
from tools.bench.build import parsed_entry
from tools.sim import simulate_patient
from tools.sim.cycles import irregular_profile, population_profile

START, END = date(2024, 1, 1), date(2025, 6, 30)
P = DEFAULT_PROTOCOL


def person(status: PatientStatus = PatientStatus.ACTIVE, since: date | None = None, plan: Plan = Plan.NATURAL) -> Patient:
    return Patient("p1", "Test Patient", date(1990, 3, 4), "n1", status, plan, START, True, since)


def simulated(seed: int, irregular: bool = False, plan: Plan = Plan.NATURAL, conceive: float = 0.0) -> list[Observation]:
    """A simulated woman's year and a half of charting, in the order the store reads it."""
    rng = random.Random(seed)
    profile = (irregular_profile if irregular else population_profile)(rng, plan, True)
    profile = replace(profile, conception_rate=conceive, logs_lh=True, logs_mucus=True)
    entries = [parsed_entry(e) for e in simulate_patient(rng, profile, START, END).entries]
    ordered = sorted(enumerate(entries), key=lambda ie: (ie[1].day, ie[1].time or "", ie[0]))
    return [Observation(e.day, e.kind, e.value, e.flags, e.time) for _, e in ordered]


def same_as_whole(patient: Patient, obs: list[Observation], kept, today: date):
    """Resume from `kept` and check it against the whole chart; returns the resumed analysis."""
    whole = analyse(patient, obs, today, P)
    open_obs = [o for o in obs if o.day >= kept[-1].next_start]
    resumed = resume(patient, kept, open_obs, today, P)
    assert resumed == whole
    rules = rule_observations(kept, open_obs)
    assert evaluate(patient, resumed, rules, today, P) == evaluate(patient, whole, obs, today, P)
    return resumed


@pytest.mark.parametrize("seed,irregular,plan,conceive", [
    (1, False, Plan.NATURAL, 0.0), (2, False, Plan.TIMED, 0.0), (3, True, Plan.NATURAL, 0.0),
    (4, True, Plan.OVULATION_INDUCTION, 0.0), (5, False, Plan.INSEMINATION, 0.3), (6, False, Plan.OVULATION_INDUCTION, 0.3),
])  # fmt: skip
def test_resumed_analysis_equals_the_whole_chart_day_after_day(seed, irregular, plan, conceive):
    obs = simulated(seed, irregular, plan, conceive)
    patient = person()
    first = date(2024, 9, 1)
    kept = closed_cycles(analyse(patient, obs, first, P), obs, (), P)
    # Eight months of 21-45 day cycles (FIGO 2018 normal range): five or more closed, unless she conceived.
    assert len(kept) >= (1 if conceive else 5)
    today = first
    while today <= END:
        resumed = same_as_whole(patient, obs, kept, today)
        # Cycles closed since are kept after the others, as a refresh does.
        kept += closed_cycles(resumed, [o for o in obs if o.day >= kept[-1].next_start], kept, P)
        today += timedelta(days=3)
    assert kept == closed_cycles(analyse(patient, obs, END, P), obs, (), P)[: len(kept)]


def test_kept_cycle_holds_the_cycle_length_and_its_entries_span():
    """Bleeds every 28 days: each kept cycle is 28 days long (cycle day 1 = first day of flow, common practice)."""
    obs = periods(5)
    kept = closed_cycles(analyse(person(), obs, START + timedelta(days=130), P), obs, (), P)
    assert [c.record.length for c in kept] == [28, 28, 28, 28]
    assert kept[0].entries_from is None and kept[1].entries_from == START + timedelta(days=28)
    assert kept[-1].next_start == START + timedelta(days=112)


def test_a_voided_day_one_of_the_open_cycle_makes_resume_refuse():
    obs = simulated(7)
    today = date(2025, 3, 1)
    kept = closed_cycles(analyse(person(), obs, today, P), obs, (), P)
    cut = kept[-1].next_start
    without_day_one = [o for o in obs if not (o.kind == Kind.BLEED and o.day == cut)]
    assert resume(person(), kept, [o for o in without_day_one if o.day >= cut], today, P) is None


def test_a_pregnancy_begun_before_the_cut_that_now_reads_otherwise_makes_resume_refuse():
    """Status set pregnant on a day inside a kept cycle: that pregnancy was not there when kept."""
    obs = simulated(8)
    today = date(2025, 3, 1)
    kept = closed_cycles(analyse(person(), obs, today, P), obs, (), P)
    inside = kept[-2].record.start + timedelta(days=3)
    pregnant = person(PatientStatus.PREGNANT, inside)
    assert resume(pregnant, kept, [o for o in obs if o.day >= kept[-1].next_start], today, P) is None


def test_a_positive_test_in_the_open_cycle_resumes_to_the_same_pregnancy():
    obs = simulated(9)
    today = date(2025, 3, 1)
    kept = closed_cycles(analyse(person(), obs, today, P), obs, (), P)
    test_day = kept[-1].next_start + timedelta(days=2)
    with_test = sorted([*obs, Observation(test_day, Kind.HCG, Value(word="positive"))], key=lambda o: o.day)
    resumed = same_as_whole(person(), with_test, kept, today)
    assert resumed.pregnancy is not None and resumed.pregnancy.positive_test == test_day


def periods(count: int, every: int = 28) -> list[Observation]:
    """Four days of moderate flow every `every` days from START."""
    return [Observation(START + timedelta(days=every * k + i), Kind.BLEED, Value(word="moderate"))
            for k in range(count) for i in range(4)]  # fmt: skip


def test_mid_cycle_bleeding_across_the_open_cycles_day_one_keeps_the_cycles_before_it():
    """Flagged bleeding the day before day 1 and the day after (one run, `bleed_merge_dry_days`
    apart at most): the cycle it ends is not kept, so the run is read whole after the cut."""
    day_one = START + timedelta(days=112)
    flagged = [Observation(day_one + timedelta(days=d), Kind.BLEED, Value(word="light"), (MIDCYCLE_FLAG,)) for d in (-1, 1)]
    obs = sorted(periods(5) + flagged, key=lambda o: o.day)
    today = START + timedelta(days=130)
    kept = closed_cycles(analyse(person(), obs, today, P), obs, (), P)
    assert kept[-1].next_start == START + timedelta(days=84)
    assert same_as_whole(person(), obs, kept, today).intermenstrual[0].start == day_one - timedelta(days=1)


def test_the_kept_key_changes_with_any_protocol_setting():
    assert kept_key(P) == kept_key(replace(P))
    assert kept_key(P) != kept_key(replace(P, fever_c=P.fever_c + 0.1))
