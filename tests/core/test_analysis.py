"""The whole analysis: the `show --json` keys, phase words and properties over generated charts."""

import random
import subprocess
import sys
from datetime import date, timedelta

from hypothesis import given, settings
from hypothesis import strategies as st

from caseload.core.analysis import PHASES, analyse
from caseload.presentation.json_shapes import analysis_json
from caseload.core.model import Kind, Observation, Patient, PatientStatus, Scan, Value

BORN = date(1991, 7, 9)
START = date(2023, 2, 6)


def patient(born: date = BORN, status: PatientStatus = PatientStatus.ACTIVE) -> Patient:
    return Patient("p1", "Test Patient", born, "n1", status)


def chart(lengths: list[int], open_days: int, seed: int, start: date = START) -> tuple[list[Observation], date]:
    """Cycles of the given lengths with bleeds, noisy temperatures with a shift 14 days before
    each period, an LH test or two; then an open cycle of `open_days` days. Returns (observations, today)."""
    rnd = random.Random(seed)
    obs: list[Observation] = []
    day = start
    for length in lengths + [None]:
        days = open_days if length is None else length
        ovulation = (length or 28) - 14
        for i in range(days):
            d = day + timedelta(days=i)
            if i < rnd.randint(3, 7):
                obs.append(Observation(d, Kind.BLEED, Value(word=rnd.choice(["light", "moderate", "heavy"]))))
            if rnd.random() < 0.85:
                base = 36.45 if i < ovulation else 36.8
                flags = ("poor-sleep",) if rnd.random() < 0.05 else ()
                obs.append(Observation(d, Kind.TEMP, Value(number=round(base + rnd.gauss(0, 0.07), 2)), flags))
            if i == ovulation - 1 and rnd.random() < 0.5:
                obs.append(Observation(d, Kind.LH, Value(word="positive")))
        if length is not None:
            day += timedelta(days=length)
    return obs, day + timedelta(days=open_days - 1)


CONTRACT = {
    "today", "cycle_day", "cycle_start", "cycles", "stats", "classification", "prediction",
    "thermal_shift", "pregnancy",
}


def test_json_has_the_contract_keys():
    obs, today = chart([28, 29, 27, 30, 28, 26, 31], 12, seed=3)
    out = analysis_json(analyse(patient(), obs, today))
    assert CONTRACT <= out.keys()
    cycle_keys = {"start", "length", "bleed_days", "ovulation", "ovulation_method", "luteal_length"}
    assert cycle_keys <= out["cycles"][0].keys()
    assert {"count", "mean", "sd", "shortest", "longest", "variation"} <= out["stats"].keys()
    assert out["classification"].keys() >= {"frequency", "regularity", "duration"}
    assert {
        "ovulation", "ovulation_range", "fertile_window", "next_period", "next_period_range", "daily", "calendar_rule",
    } <= out["prediction"].keys()
    assert {"confirmed", "confirmed_on", "first_high", "coverline", "change_point"} <= out["thermal_shift"].keys()
    assert {"day", "p_fertile"} <= out["prediction"]["daily"][0].keys()
    assert out["prediction"]["calendar_rule"] == [26 - 18, 31 - 11]
    assert out["cycles"][-1]["length"] is None and out["cycle_day"] == 12
    assert out["pregnancy"] is None and out["phase"] in PHASES


def test_pregnancy_json_and_no_forecast_when_pregnant():
    obs, today = chart([28, 28, 28], 30, seed=1)
    obs += [
        Observation(today - timedelta(days=2), Kind.HCG, Value(number=120.0)),
        Observation(today, Kind.HCG, Value(number=260.0)),
    ]
    a = analyse(patient(), obs, today)
    out = analysis_json(a)
    assert out["pregnancy"].keys() >= {"edd", "edd_method", "gestational_age_days", "hcg_rise_48h"}
    # (260 / 120) ^ (48 h / 48 h) - 1
    assert out["pregnancy"]["hcg_rise_48h"] == round(260 / 120 - 1, 4)
    assert a.prediction is None and out["prediction"] is None and a.phase == "pregnant"


def _current_cycle(start: date, days: int, **extra: list[int]) -> list[Observation]:
    """An open cycle: 5 days of bleeding, flat temperatures, then the given markers by cycle day."""
    obs = [Observation(start + timedelta(days=i), Kind.BLEED, Value(word="moderate")) for i in range(5)]
    for i in range(days):
        t = 36.8 if i + 1 in extra.get("high", ()) else 36.45 + 0.05 * (i % 2)
        obs.append(Observation(start + timedelta(days=i), Kind.TEMP, Value(number=t)))
    obs += [Observation(start + timedelta(days=d - 1), Kind.LH, Value(word="positive")) for d in extra.get("lh", ())]
    return obs


def test_phase_words():
    history, day1 = chart([28, 28, 28], 1, seed=6)  # today is day 1 of the open cycle

    def on(n: int) -> date:
        return day1 + timedelta(days=n - 1)

    past = [o for o in history if o.day < day1]
    assert analyse(patient(), past + _current_cycle(day1, 3), on(3)).phase == "bleeding"
    assert analyse(patient(), past + _current_cycle(day1, 7), on(7)).phase == "pre-window"
    assert analyse(patient(), past + _current_cycle(day1, 13), on(13)).phase == "window"
    assert analyse(patient(), past + _current_cycle(day1, 13, lh=[13]), on(13)).phase == "window"
    assert analyse(patient(), past + _current_cycle(day1, 16, lh=[13]), on(16)).phase == "luteal"
    shifted = past + _current_cycle(day1, 18, high=[16, 17, 18])
    assert analyse(patient(), shifted, on(18)).phase == "luteal"
    assert analyse(patient(status=PatientStatus.PREGNANT), shifted, on(18)).phase == "pregnant"


def test_no_cycle_start_no_prediction():
    obs = [Observation(date(2024, 1, 3), Kind.TEMP, Value(number=36.5))]
    a = analyse(patient(), obs, date(2024, 1, 10))
    assert a.prediction is None and a.cycle_day is None and a.phase == "unknown"
    assert analysis_json(a)["thermal_shift"] is None


def test_entries_after_today_are_ignored():
    obs, today = chart([28, 28, 28], 10, seed=2)
    later = [Observation(today + timedelta(days=3), Kind.BLEED, Value(word="heavy"))]
    assert analysis_json(analyse(patient(), obs + later, today)) == analysis_json(analyse(patient(), obs, today))


def test_follicles_and_next_event_trigger_size():
    obs, today = chart([28, 28, 28], 6, seed=4)
    obs += [
        Observation(today - timedelta(days=2), Kind.SCAN, Value(scan=Scan((12.0, 10.0)))),
        Observation(today, Kind.SCAN, Value(scan=Scan((15.0, 14.0, 11.0), 8.0))),
    ]
    a = analyse(patient(), obs, today)
    assert a.follicles.mature_count == 2 and a.follicles.growth_mm_per_day == 1.5
    assert a.follicles.trigger_day == today + timedelta(days=2)
    assert a.next_event.label == "trigger size" and a.next_event.day == today + timedelta(days=2)


def test_the_core_loads_no_storage_or_interface():
    code = (
        "import sys, caseload.core.analysis;"
        "print(sorted(m for m in ('sqlite3', 'sqlite_utils', 'textual') if m in sys.modules))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "[]"


def _shift_dates(value, k: int):
    if isinstance(value, dict):
        return {key: _shift_dates(v, k) for key, v in value.items()}
    if isinstance(value, list):
        return [_shift_dates(v, k) for v in value]
    if isinstance(value, str) and len(value) == 10 and value[4] == "-" and value[7] == "-":
        return (date.fromisoformat(value) + timedelta(days=k)).isoformat()
    return value


lengths_st = st.lists(st.integers(21, 45), max_size=8)


@settings(max_examples=40, deadline=None)
@given(lengths_st, st.integers(1, 60), st.integers(0, 10_000), st.integers(-800, 800))
def test_shifting_every_date_shifts_every_output(lengths, open_days, seed, k):
    obs, today = chart(lengths, open_days, seed)
    moved = [Observation(o.day + timedelta(days=k), o.kind, o.value, o.flags, o.time) for o in obs]
    before = analysis_json(analyse(patient(), obs, today))
    after = analysis_json(analyse(patient(BORN + timedelta(days=k)), moved, today + timedelta(days=k)))
    assert after == _shift_dates(before, k)


@settings(max_examples=40, deadline=None)
@given(lengths_st, st.integers(21, 45), st.integers(1, 30), st.integers(0, 10_000))
def test_adding_a_complete_cycle_never_lowers_the_count(lengths, extra, open_days, seed):
    obs, today = chart(lengths, open_days, seed)
    more, later = chart(lengths + [extra], open_days, seed)
    assert analyse(patient(), more, later).stats.count >= analyse(patient(), obs, today).stats.count


@settings(max_examples=60, deadline=None)
@given(lengths_st, st.integers(1, 80), st.integers(0, 10_000), st.booleans())
def test_predictions_never_fall_before_day_one(lengths, open_days, seed, lh_early):
    obs, today = chart(lengths, open_days, seed)
    if lh_early:
        obs.append(Observation(today - timedelta(days=min(open_days - 1, 3)), Kind.LH, Value(word="positive")))
    a = analyse(patient(), obs, today)
    p = a.prediction
    day1 = a.cycle_start
    dates = [p.next_period, *p.next_period_range, p.expected_ovulation, *p.expected_ovulation_range]
    if p.ovulation is not None:
        dates += [p.ovulation, *p.ovulation_range, *p.fertile_window]
    assert all(d >= day1 for d in dates)
    assert all(d >= day1 for d, _ in p.ovulation_distribution)
    assert p.next_period > day1
    assert all(0.0 <= c.p_fertile <= 1.0 for c in p.daily)


def test_a_decades_long_gap_is_not_learnt_as_a_cycle():
    """A mistyped year must not stretch the forecast: gaps of 90+ days are amenorrhoea (FIGO 2018, 90 days from memory)."""
    patient = Patient("P1", "Test", date(1940, 1, 1), None)
    obs = [Observation(date(1950, 1, 1), Kind.BLEED, Value(word="heavy")),
           Observation(date(2026, 11, 1), Kind.BLEED, Value(word="heavy"))]
    a = analyse(patient, obs, date(2026, 12, 1))
    assert a.cycle_day == 31
    assert a.prediction.cycle_length.observed == 0  # the prior stands alone
