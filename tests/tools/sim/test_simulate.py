"""The simulator: seeded, dated within bounds, in the entry formats, and true to its sources."""

from __future__ import annotations

import math
import random
import re
import statistics
from dataclasses import replace
from datetime import date, timedelta
from functools import cache

import pytest

from caseload.core.model import MUCUS_SCALE, Flow, Kind, Plan
from caseload.core.parse import parse_entry
from tools.sim import simulate_caseload, simulate_patient
from tools.sim.chart import TrueCycle
from tools.sim.cycles import population_profile
from tools.sim.render import render_chart

START, END = date(2023, 1, 1), date(2023, 12, 31)
FORMATS = {
    Kind.TEMP: re.compile(r"\d{2}\.\d{2}|\d{2,3}\.\dF"),
    Kind.BLEED: re.compile("|".join(f.value for f in Flow)),
    Kind.LH: re.compile("positive|negative"),
    Kind.MUCUS: re.compile("|".join(MUCUS_SCALE)),
    Kind.HCG: re.compile(r"positive|negative|\d+"),
    Kind.SCAN: re.compile(r"\d+(\.5)?(,\d+(\.5)?)* endo \d+(\.\d)?"),
}
TIME = re.compile(r"([01]\d|2[0-3]):[0-5]\d")


@cache
def caseload(n: int = 200, seed: int = 42):
    return list(simulate_caseload(seed, n, START, END, nurses=("nurse-a", "nurse-b")))


def test_same_seed_gives_identical_output():
    assert list(simulate_caseload(9, 20, START, END)) == list(simulate_caseload(9, 20, START, END))
    rng_a, rng_b = random.Random(1), random.Random(1)
    profile = population_profile(random.Random(2), Plan.TIMED, True)
    assert simulate_patient(rng_a, profile, START, END) == simulate_patient(rng_b, profile, START, END)


def test_different_seed_differs_and_patients_do_not_depend_on_caseload_size():
    small = list(simulate_caseload(9, 5, START, END))
    assert small == list(simulate_caseload(9, 12, START, END))[:5]
    assert small != list(simulate_caseload(10, 5, START, END))


def test_entries_stay_within_the_dates_and_in_day_order():
    for _, chart in caseload():
        days = [e.day for e in chart.entries]
        assert days == sorted(days)
        assert not days or (START <= days[0] and days[-1] <= END)


def test_every_raw_value_is_in_an_accepted_format():
    for _, chart in caseload():
        for e in chart.entries:
            pattern = FORMATS.get(e.kind)
            if pattern is not None:
                assert pattern.fullmatch(e.raw), (e.kind, e.raw)
            else:
                assert e.raw.strip(), e
            if e.kind is Kind.TEMP:
                assert TIME.fullmatch(e.time)
                # Readings after 09:00 carry the late flag, and only those (common practice).
                assert ("late" in e.flags) == (e.time > "09:00"), e
            else:
                assert e.time is None


def test_every_entry_is_accepted_by_the_entry_parser():
    for _, chart in caseload()[:40]:
        for e in chart.entries:
            parsed = parse_entry(e.kind, e.raw, END, e.day.isoformat(), e.time, e.flags, e.note)
            assert parsed.kind is e.kind and parsed.day == e.day


def test_temperatures_are_in_celsius_range_and_never_a_fever():
    for _, chart in caseload():
        for e in chart.entries:
            if e.kind is Kind.TEMP:
                c = (float(e.raw[:-1]) - 32) / 1.8 if e.raw.endswith("F") else float(e.raw)
                assert 35.0 < c < 38.0, e.raw


def _temps(chart) -> dict[date, float]:
    return {e.day: float(e.raw) for e in chart.entries if e.kind is Kind.TEMP and not e.flags and "F" not in e.raw}


def _between(temps: dict[date, float], first: date, last: date) -> list[float]:
    days = (first + timedelta(days=i) for i in range((last - first).days + 1))
    return [temps[d] for d in days if d in temps]


def test_basal_temperature_rise_and_noise_match_the_who_handbook():
    rises, low_levels, low_sds = [], [], []
    for _, chart in caseload():
        temps = _temps(chart)
        for c in chart.truth:
            if c.ovulation is None or c.length is None or c.conceived:
                continue
            low = _between(temps, c.start, c.ovulation)
            high = _between(temps, c.ovulation + timedelta(days=4), c.next_start - timedelta(days=2))
            if len(low) >= 8 and len(high) >= 5:
                rises.append(statistics.fmean(high) - statistics.fmean(low))
                low_levels.append(statistics.fmean(low))
                low_sds.append(statistics.stdev(low))
    assert len(rises) > 300
    # WHO Global Handbook: the temperature rises 0.2-0.5 C after ovulation.
    assert 0.2 < min(statistics.quantiles(rises, n=20)) and max(statistics.quantiles(rises, n=20)) < 0.5
    # Low phase around 36.3-36.5 C with daily noise about 0.1 C.
    assert 36.3 < statistics.median(low_levels) < 36.5
    assert 0.07 < statistics.median(low_sds) < 0.12


def test_lh_turns_positive_one_or_two_days_before_ovulation():
    leads = []
    for _, chart in caseload():
        positives = sorted(e.day for e in chart.entries if e.kind is Kind.LH and e.raw == "positive")
        for c in chart.truth:
            in_cycle = [d for d in positives if c.start <= d and (c.length is None or d < c.next_start)]
            if c.ovulation is None:
                assert not in_cycle, "an anovulatory cycle has no LH surge"
            elif in_cycle:
                leads.append((c.ovulation - in_cycle[0]).days)
    # WHO Task Force 1980: median 32 h from the LH rise to ovulation; 90% within 16-48 h.
    assert set(leads) <= {1, 2}
    assert 0.6 < leads.count(1) / len(leads) < 0.8


def test_serial_serum_hcg_rises_by_a_median_124_percent_in_48_hours():
    rng = random.Random(8)
    profile = population_profile(rng, Plan.TIMED, True)
    rises = []
    for _ in range(300):
        conceived = TrueCycle(START, None, 5, START + timedelta(days=14), conceived=True)
        entries = render_chart(rng, profile, [conceived], START, END)
        serum = [(e.day, float(e.raw)) for e in entries if e.kind is Kind.HCG and e.raw.isdigit()]
        for (d1, v1), (d2, v2) in zip(serum, serum[1:]):
            rises.append((v2 / v1) ** (2 / (d2 - d1).days) - 1)
    assert len(rises) > 200
    # Barnhart 2004: median rise 124% in 2 days; minimum for a viable pregnancy 53%.
    assert abs(statistics.median(rises) - 1.24) < 0.1
    assert sum(r < 0.53 for r in rises) / len(rises) < 0.03


def test_pregnancy_shows_a_positive_urine_test_about_14_days_after_ovulation():
    found = 0
    for patient, chart in caseload():
        last = chart.truth[-1]
        if not last.conceived:
            continue
        positive = [e.day for e in chart.entries if e.kind is Kind.HCG and e.raw == "positive"]
        if positive:
            found += 1
            assert 13 <= (positive[0] - last.ovulation).days <= 16
        assert patient.status == "pregnant"
        assert not any(e.kind is Kind.BLEED and e.day > last.start + timedelta(days=10) for e in chart.entries)
    assert found > 0


def test_stimulated_cycles_follow_the_monitoring_protocol():
    for patient, chart in caseload():
        for c in chart.truth:
            stim = c.stimulation
            if stim is None:
                continue
            days = [(s.day - c.start).days + 1 for s in stim.scans]
            # Scans every 2-3 days from day 9 or 10; trigger once the lead reaches 18 mm (common practice).
            assert days[0] in (9, 10) and all(b - a in (2, 3) for a, b in zip(days, days[1:]))
            leads = [s.follicles_mm[0] for s in stim.scans]
            assert leads[-1] >= 18 and all(x < 18 for x in leads[:-1])
            assert stim.trigger == stim.scans[-1].day and c.ovulation == stim.trigger + timedelta(days=1)
            # Follicles grow 1-2 mm a day (common practice); half-millimetre rounding allowed.
            for a, b in zip(stim.scans, stim.scans[1:]):
                per_day = (b.follicles_mm[0] - a.follicles_mm[0]) / (b.day - a.day).days
                assert 0.75 <= per_day <= 2.25
            if patient.plan == Plan.INSEMINATION:
                iui = [e.day for e in chart.entries if e.kind is Kind.INSEMINATION and c.start <= e.day <= c.ovulation]
                assert iui in ([], [stim.trigger + timedelta(days=1)])


def test_the_mix_matches_the_caseload_design():
    patients = caseload()
    temps = sum(p.charting_temps for p, _ in patients) / len(patients)
    irregular = sum(c.profile.cycle_sd >= 5 for _, c in patients) / len(patients)
    plans = {p.plan for p, _ in patients}
    assert abs(temps - 0.6) < 0.08 and abs(irregular - 0.15) < 0.06
    assert plans == set(Plan)
    assert any(p.status == "pregnant" for p, _ in patients)
    assert {p.nurse_id for p, _ in patients} == {"nurse-a", "nurse-b"}
    assert any(c.ovulation is None for _, ch in patients for c in ch.truth)


def test_logging_gaps_appear():
    longest = 0
    for _, chart in caseload():
        days = sorted({e.day for e in chart.entries})
        if chart.profile.charting_temps and days:
            longest = max([longest] + [(b - a).days - 1 for a, b in zip(days, days[1:])])
    assert longest >= 3


def test_bad_dates_and_counts_are_refused_with_a_clear_message():
    profile = population_profile(random.Random(1), Plan.NATURAL, True)
    with pytest.raises(ValueError, match="before start"):
        simulate_patient(random.Random(1), profile, END, START)
    with pytest.raises(ValueError, match="zero or more"):
        list(simulate_caseload(1, -1, START, END))


def test_fahrenheit_readings_convert_back_to_the_low_phase():
    profile = replace(population_profile(random.Random(4), Plan.NATURAL, True), fahrenheit_rate=1.0, disturbed_rate=0.0)
    chart = simulate_patient(random.Random(4), profile, START, START + timedelta(days=60))
    first = chart.truth[0]
    lows = [
        (float(e.raw[:-1]) - 32) / 1.8
        for e in chart.entries
        if e.kind is Kind.TEMP and first.ovulation and e.day <= first.ovulation
    ]
    assert lows and all(e.raw.endswith("F") for e in chart.entries if e.kind is Kind.TEMP)
    assert math.isclose(statistics.fmean(lows), profile.temp_low, abs_tol=0.1)
