"""Each alert rule on invented charts: one chart that must raise it, and a near miss that must not.

Charts are noiseless (tests/core/alert_charts.py): six regular 28-day cycles with a 14-day luteal
phase, then the cycle under test. Each check names the source of its threshold.
"""

from __future__ import annotations

from dataclasses import replace
from datetime import timedelta

import pytest

from caseload.core.alerts import CAUTION, RULES, AlertKind, Facts
from caseload.core.model import Kind, PatientStatus, Plan, Severity, Value
from caseload.core.settings import DEFAULT_PROTOCOL
from tests.core.alert_charts import HIGH, LOW, START, Chart, at, day, kinds, of, patient, run

K = AlertKind


def regular(lengths=(28,) * 6, temps: bool = True, bleed_days: int = 5) -> tuple[Chart, object]:
    chart = Chart()
    current = chart.history(list(lengths), temps=temps)
    chart.bleed(current, bleed_days)
    return chart, current


def follicular(cd: int, temps: bool = True):
    """Today on cycle day `cd` of a cycle with low readings every day so far."""
    chart, current = regular(temps=temps)
    if temps:
        chart.temps(current, day(current, cd))
    return chart, day(current, cd)


# --- window-approaching, window-open (P(fertile): six-day window of Wilcox 1995; 0.2/0.5: common practice)


def test_window_approaching_when_the_chance_reaches_0_2_within_three_days():
    chart, today = follicular(4)
    _, found = run(chart, today)
    (alert,) = of(found, K.WINDOW_APPROACHING)
    assert alert.raisable and alert.severity is Severity.SOON
    assert alert.evidence["p_fertile"] >= 0.2 and alert.due == today + timedelta(days=3)
    assert alert.key == f"P0001:window-approaching:{chart.starts[-1].isoformat()}"


def test_window_approaching_near_miss_a_day_earlier():
    chart, today = follicular(3)  # 0.2 is reached four days ahead, not within three
    _, found = run(chart, today)
    assert K.WINDOW_APPROACHING not in kinds(found)


def test_window_open_when_p_fertile_today_reaches_0_5():
    chart, today = follicular(9)
    analysis, found = run(chart, today)
    assert analysis.prediction.daily[0].p_fertile >= 0.5
    (alert,) = of(found, K.WINDOW_OPEN)
    assert alert.raisable and alert.severity is Severity.TODAY and alert.due == today
    assert K.WINDOW_APPROACHING not in kinds(found, raisable_only=False)  # open, no longer approaching


def test_window_open_near_miss_the_day_before():
    chart, today = follicular(8)
    analysis, found = run(chart, today)
    assert analysis.prediction.daily[0].p_fertile < 0.5
    assert K.WINDOW_OPEN not in kinds(found) and K.WINDOW_APPROACHING in kinds(found)


def test_window_open_on_an_lh_surge_with_no_shift_even_at_low_p():
    chart, today = follicular(6)
    _, before = run(chart, today)
    assert K.WINDOW_OPEN not in kinds(before)
    _, found = run(chart.lh(today), today)  # WHO Task Force 1980: ovulation follows the surge
    (alert,) = of(found, K.WINDOW_OPEN)
    assert alert.raisable and alert.evidence["lh_surge"] == today.isoformat()


@pytest.mark.parametrize("temps", [True, False])
def test_an_lh_surge_holds_the_window_to_the_day_after_the_ovulation_it_dates(temps):
    chart, current = regular(temps=temps)
    surge = day(current, 6)  # early, where the pattern alone gives P(fertile) under 0.2
    chart.lh(surge)
    if temps:
        chart.temps(current, day(current, 10))  # no shift yet, however long it takes to confirm
    who = patient(temps=temps)
    assert K.WINDOW_OPEN in kinds(run(chart, surge + timedelta(days=2), who)[1])  # ovulation + 1 (ovum 12-24 h)
    assert K.WINDOW_OPEN not in kinds(run(chart, surge + timedelta(days=3), who)[1])


def test_window_alerts_end_with_a_confirmed_shift():
    chart, current = regular()
    today = day(current, 17)
    chart.temps(current, today, high_from=day(current, 15))
    analysis, found = run(chart, today)
    assert analysis.current.shift.confirmed
    assert not {K.WINDOW_OPEN, K.WINDOW_APPROACHING} & kinds(found, raisable_only=False)


@pytest.mark.parametrize("peak_cd", [18, 20, 22])
def test_mucus_fertile_time_lasts_to_the_third_day_after_the_peak(peak_cd):
    # Mucus observation: fertile to the end of the third day after the peak (common practice); a
    # late peak, where the pattern alone gives P(fertile) under 0.5, still opens the window, and the
    # phase is not luteal the day after the peak while the window is open.
    chart, current = regular(temps=False)
    chart.add(day(current, peak_cd - 1), Kind.MUCUS, Value(word="stretchy"))
    chart.add(day(current, peak_cd), Kind.MUCUS, Value(word="stretchy"))
    chart.add(day(current, peak_cd + 1), Kind.MUCUS, Value(word="sticky"))
    who = patient(temps=False)
    for cd in range(peak_cd + 1, peak_cd + 4):
        analysis, found = run(chart, day(current, cd), who)
        assert analysis.current.markers.mucus_peak == day(current, peak_cd)
        assert K.WINDOW_OPEN in kinds(found) and analysis.phase == "window", cd
    analysis, found = run(chart, day(current, peak_cd + 4), who)
    assert analysis.phase == "luteal" and K.WINDOW_OPEN not in kinds(found)


def _window_days(chart: Chart, start, days: range, who=None) -> dict[int, set]:
    """Cycle day -> the window kinds raised that day."""
    out = {}
    for cd in days:
        found = run(chart, day(start, cd), who or patient(temps=False))[1]
        out[cd] = kinds(found) & {K.WINDOW_OPEN, K.WINDOW_APPROACHING}
    return out


@pytest.mark.parametrize(
    "lengths", [(), (35,), (24, 38, 30, 45, 27, 35), (40, 26, 33, 48, 29, 37, 31), (22, 23, 36, 37)]
)
def test_window_open_for_new_and_irregular_patients_whose_curve_stays_flat(lengths):
    # A new patient (population prior, Fehring 2006) or an irregular one never reaches P(fertile)
    # 0.5; the window opens at the top of her own curve (0.8 of its peak, common practice) instead,
    # and approaches before that (0.2, common practice; six-day window: Wilcox 1995).
    chart = Chart()
    current = chart.history(list(lengths), temps=False) if lengths else day(START, 1)
    chart.bleed(current)
    seen = _window_days(chart, current, range(2, 40))
    opened = [cd for cd, k in seen.items() if K.WINDOW_OPEN in k]
    approached = [cd for cd, k in seen.items() if K.WINDOW_APPROACHING in k]
    assert opened and approached and min(approached) < min(opened)
    first = run(chart, day(current, min(opened)), patient(temps=False))[0].prediction
    assert first.daily[0].p_fertile >= 0.8 * first.peak_p_fertile - 1e-9


def test_window_approaching_never_ends_as_passed_at_the_peak():
    # A new patient: every day up to the peak of her curve, a raised window-approaching alert ends
    # (if it ends) because the window opened, never because it passed.
    from caseload.core.alerts.lifecycle import ended_reason
    from caseload.core.model import Alert, AlertState

    chart = Chart()
    current = day(START, 1)
    chart.bleed(current)
    who = patient(temps=False)
    raised = None
    for cd in range(2, 30):
        analysis, found = run(chart, day(current, cd), who)
        approaching = of(found, K.WINDOW_APPROACHING)
        if raised is None and approaching and approaching[0].raisable:
            c = approaching[0]
            raised = Alert(id=1, patient_id=c.patient_id, kind=c.kind, key=c.key, severity=c.severity,
                           raised_on=day(current, cd), due=c.due, message=c.message, evidence=c.evidence,
                           rule=c.rule, source=c.source, state=AlertState.OPEN)  # fmt: skip
        elif raised is not None and not approaching:
            facts = Facts(who, analysis, chart.obs, day(current, cd), DEFAULT_PROTOCOL)
            assert "has passed" not in ended_reason(raised, facts)
            assert K.WINDOW_OPEN in kinds(found)
            break
    assert raised is not None


@pytest.mark.parametrize("status", [PatientStatus.PREGNANT, PatientStatus.PAUSED, PatientStatus.DISCHARGED])
def test_no_window_alerts_once_pregnant_paused_or_discharged(status):
    chart, today = follicular(10)
    _, found = run(chart, today, patient(status=status))
    assert not {K.WINDOW_OPEN, K.WINDOW_APPROACHING} & kinds(found, raisable_only=False)


@pytest.mark.parametrize("plan", list(Plan))
def test_every_plan_times_something_to_ovulation(plan):
    chart, today = follicular(10)
    assert K.WINDOW_OPEN in kinds(run(chart, today, patient(plan=plan))[1])


# --- no-thermal-shift (grace of 3 days and 70% coverage: common practice; three-over-six rule, Miolo 1993; Marshall 1968)


def test_no_thermal_shift_the_day_after_the_deadline():
    chart, today = follicular(21)
    analysis, found = run(chart, today)
    latest = analysis.prediction.expected_ovulation_range[1]
    assert today == latest + timedelta(days=4)  # past the 80% upper bound + 3 days
    (alert,) = of(found, K.NO_THERMAL_SHIFT)
    assert alert.raisable and alert.severity is Severity.SOON and alert.evidence["coverage"] == 1.0


def test_no_thermal_shift_near_miss_on_the_deadline_day():
    chart, today = follicular(20)
    assert K.NO_THERMAL_SHIFT not in kinds(run(chart, today)[1], raisable_only=False)


def test_no_thermal_shift_near_miss_a_shift_confirmed_a_day_before_the_deadline():
    chart, current = regular()
    today = day(current, 21)
    chart.temps(current, today, high_from=day(current, 17))  # third high reading on day 19, deadline day 20
    analysis, found = run(chart, today)
    assert analysis.current.shift.confirmed_on == day(current, 19)
    assert K.NO_THERMAL_SHIFT not in kinds(found, raisable_only=False)


def test_no_thermal_shift_near_miss_an_uncertain_shift():
    chart, current = regular()
    _uncertain(chart, current, 21)
    analysis, found = run(chart, day(current, 21))
    assert analysis.current.shift.agreement == "uncertain"
    assert K.NO_THERMAL_SHIFT not in kinds(found, raisable_only=False)


def test_no_thermal_shift_needs_readings_on_70_percent_of_days():
    chart, current = regular()
    today = day(current, 21)
    chart.temps(current, today, skip={day(current, cd) for cd in range(2, 9)})  # 14 of 21 days: 67%
    found = of(run(chart, today)[1], K.NO_THERMAL_SHIFT)
    assert [c.raisable for c in found] == [False]  # held, should one have been raised, but not news


@pytest.mark.parametrize("kind", [K.NO_THERMAL_SHIFT, K.MONOPHASIC_CYCLE, K.SUSTAINED_HIGH_TEMPS])
def test_no_thermal_alerts_for_a_patient_not_charting_temperatures(kind):
    scope = RULES[kind][0]
    assert scope.needs_temps
    chart, today = follicular(21)
    assert kind not in kinds(run(chart, today, patient(temps=False))[1], raisable_only=False)


# --- monophasic-cycle (70% coverage: common practice)


def _monophasic(readings: int) -> tuple[Chart, object]:
    chart = Chart()
    start = chart.history([28] * 5)
    chart.bleed(start)
    skip = {day(start, cd) for cd in range(28, readings, -1)}
    chart.temps(start, day(start, 28), skip=skip)
    nxt = start + timedelta(days=28)
    chart.bleed(nxt)
    return chart, nxt + timedelta(days=1)


def test_monophasic_cycle_with_readings_on_20_of_28_days():
    chart, today = _monophasic(20)
    (alert,) = of(run(chart, today)[1], K.MONOPHASIC_CYCLE)
    assert alert.raisable and alert.evidence["coverage"] == pytest.approx(20 / 28, abs=0.001)


def test_monophasic_cycle_near_miss_readings_on_19_of_28_days():
    chart, today = _monophasic(19)  # 68%: too thin to call the cycle monophasic
    assert K.MONOPHASIC_CYCLE not in kinds(run(chart, today)[1], raisable_only=False)


def _uncertain(chart: Chart, start, until_cd: int) -> None:
    """Low to day 14, then mostly high with every third reading back to the low level: the
    three-over-six rule never sees three highs in a row, the change-point estimate sees the rise."""
    for cd in range(1, until_cd + 1):
        chart.temp(day(start, cd), LOW if cd <= 14 or (cd - 15) % 3 == 2 else HIGH)


def test_no_monophasic_cycle_when_the_change_point_sees_a_rise():
    chart = Chart()
    start = chart.history([28] * 5)
    chart.bleed(start)
    _uncertain(chart, start, 28)
    nxt = start + timedelta(days=28)
    chart.bleed(nxt)
    analysis, found = run(chart, nxt)
    shift = analysis.cycles[-2].shift
    assert not shift.confirmed and shift.change_point.passes and shift.agreement == "uncertain"
    assert K.MONOPHASIC_CYCLE not in kinds(found, raisable_only=False)


def test_an_older_monophasic_cycle_is_held_but_not_raised():
    chart, today = _monophasic(28)
    later = today + timedelta(days=27)
    chart.bleed(later)
    found = of(run(chart, later)[1], K.MONOPHASIC_CYCLE)
    assert [c.raisable for c in found] == [False]


# --- irregular-cycles (FIGO 2018: variation up to 7 days at 26-41; frequency 24-38 days)


def test_irregular_cycles_variation_8_days_at_34():
    chart, today = regular((26, 30, 34, 28))
    (alert,) = of(run(chart, today + timedelta(days=1))[1], K.IRREGULAR_CYCLES)
    # The run began once three cycles (FIGO 2018's minimum here) varied by 8 days: the day after the 34-day cycle.
    assert alert.key == "P0001:irregular-cycles:2026-05-31" and alert.evidence["variation"] == 8


def test_irregular_cycles_near_miss_variation_7_days_at_34():
    chart, today = regular((26, 30, 33, 28))
    assert K.IRREGULAR_CYCLES not in kinds(run(chart, today + timedelta(days=1))[1])


def test_infrequent_cycles_are_referred_and_keyed_on_the_run_of_abnormal_cycles():
    chart, today = regular((40, 41, 42, 40))  # median 40.5 > 38
    (alert,) = of(run(chart, today + timedelta(days=1))[1], K.IRREGULAR_CYCLES)
    # Infrequent from the third cycle on (median 41 > 38, FIGO 2018): the run began the day after it.
    assert alert.key == f"P0001:irregular-cycles:{(START + timedelta(days=40 + 41 + 42)).isoformat()}"
    assert "refer" in alert.message


# --- short-luteal-phase (ASRM 2021: 10 days or fewer)


def _luteal(days: int):
    chart = Chart()
    start = chart.history([28] * 5)
    chart.cycle(start, 28, 28 - days)  # ovulation on day 28 - days: a luteal phase of `days`
    nxt = start + timedelta(days=28)
    chart.bleed(nxt)
    return chart, nxt + timedelta(days=1)


def test_short_luteal_phase_of_10_days():
    chart, today = _luteal(10)
    (alert,) = of(run(chart, today)[1], K.SHORT_LUTEAL_PHASE)
    assert alert.raisable and alert.evidence["luteal_length"] == 10 and alert.source == "ASRM 2021"


def test_short_luteal_phase_near_miss_11_days():
    chart, today = _luteal(11)
    assert K.SHORT_LUTEAL_PHASE not in kinds(run(chart, today)[1], raisable_only=False)


def _lh_dated(lh_day: int):
    """A 28-day cycle dated by one positive LH test alone (no temperatures)."""
    chart = Chart()
    start = chart.history([28] * 5)
    chart.cycle(start, 28, None, temps=False).lh(day(start, lh_day))
    nxt = start + timedelta(days=28)
    chart.bleed(nxt)
    return chart, nxt + timedelta(days=1)


@pytest.mark.parametrize("lh_day, luteal", [(22, 6), (24, 4)])
def test_a_luteal_phase_too_short_to_be_real_is_a_dating_conflict_not_a_short_phase(lh_day, luteal):
    # ASRM 2021: typical 11-17 days; under 7 days says the dating is wrong, shown as a conflict and
    # not raised as short-luteal-phase. Counted from the day after the LH peak (Lenton 1984).
    chart, today = _lh_dated(lh_day)
    analysis, candidates = run(chart, today)
    record = analysis.cycles[-2]
    assert record.luteal_length == luteal and record.dating_conflict is not None
    assert K.SHORT_LUTEAL_PHASE not in kinds(candidates, raisable_only=False)


def test_a_short_but_plausible_lh_dated_luteal_phase_is_still_raised():
    # 28 - 21 = 7 days from the day after the LH peak (Lenton 1984): within 7-20, and 10 or fewer (ASRM 2021).
    chart, today = _lh_dated(21)
    (alert,) = of(run(chart, today)[1], K.SHORT_LUTEAL_PHASE)
    assert alert.evidence["luteal_length"] == 7


# --- prolonged-bleeding (FIGO 2018: normal up to 8 days)


@pytest.mark.parametrize("days, raised", [(9, True), (8, False)])
def test_prolonged_bleeding_9_vs_8_days(days, raised):
    chart = Chart()
    start = chart.history([28] * 6)
    chart.bleed(start, days)
    found = run(chart, day(start, days))[1]
    assert (K.PROLONGED_BLEEDING in kinds(found)) is raised
    if raised:
        assert of(found, K.PROLONGED_BLEEDING)[0].severity is Severity.TODAY


# --- period-overdue (90% upper bound: common practice; first high + 17 days: ASRM 2021 luteal up to 17)


def test_period_overdue_past_the_90_percent_upper_bound_without_temperatures():
    chart, current = regular(temps=False)
    who = patient(temps=False)
    analysis, found = run(chart, day(current, 33), who)
    assert analysis.prediction.next_period_range[1] == day(current, 33)
    assert K.PERIOD_OVERDUE not in kinds(found)
    (alert,) = of(run(chart, day(current, 34), who)[1], K.PERIOD_OVERDUE)
    assert alert.evidence["days_late"] == 1 and "pregnancy test" in alert.message


def test_period_overdue_counted_from_the_first_high_temperature():
    chart, current = regular()
    chart.temps(current, day(current, 40), high_from=day(current, 15))
    protocol = replace(DEFAULT_PROTOCOL, overdue_after_shift_days=12)  # earlier than the upper bound
    assert K.PERIOD_OVERDUE not in kinds(run(chart, day(current, 27), protocol=protocol)[1])
    (alert,) = of(run(chart, day(current, 28), protocol=protocol)[1], K.PERIOD_OVERDUE)
    assert alert.evidence["first_high"] == day(current, 15).isoformat()
    assert alert.evidence["after_shift_limit"] == day(current, 27).isoformat()
    assert alert.source.startswith("clinic protocol: overdue_after_shift_days = 12 (default 17)")


@pytest.mark.parametrize("rise", [15, 20, 24])
def test_after_a_late_shift_the_period_is_overdue_only_17_days_after_its_first_high(rise):
    # ASRM 2021: a luteal phase lasts up to 17 days. Regular 28-day cycles, this one's rise on `rise`
    # (a late ovulation): her usual cycle says nothing of when this one ends, the shift does.
    chart, current = regular()
    chart.temps(current, day(current, rise + 20), high_from=day(current, rise))
    assert K.PERIOD_OVERDUE not in kinds(run(chart, day(current, rise + 17))[1])
    (alert,) = of(run(chart, day(current, rise + 18))[1], K.PERIOD_OVERDUE)
    assert alert.evidence["after_shift_limit"] == day(current, rise + 17).isoformat()


def test_no_period_overdue_when_a_positive_test_is_logged():
    chart, current = regular(temps=False)
    chart.add(day(current, 30), Kind.HCG, Value(word="positive"))
    assert K.PERIOD_OVERDUE not in kinds(run(chart, day(current, 36), patient(temps=False))[1])


# --- sustained-high-temps (18 days: common practice, no published source)


@pytest.mark.parametrize("cd, raised", [(32, True), (31, False)])
def test_sustained_high_temps_18_vs_17_days(cd, raised):
    chart, current = regular()
    chart.temps(current, day(current, cd), high_from=day(current, 15))
    analysis, found = run(chart, day(current, cd))
    assert analysis.current.shift.days_above_coverline == cd - 14
    assert (K.SUSTAINED_HIGH_TEMPS in kinds(found)) is raised


# --- amenorrhoea (FIGO 2018 absent bleeding; 90 days from memory)


@pytest.mark.parametrize("dry_days, raised", [(90, True), (89, False)])
def test_amenorrhoea_90_vs_89_days(dry_days, raised):
    chart, current = regular(temps=False)
    last_bleed = day(current, 5)
    found = run(chart, last_bleed + timedelta(days=dry_days), patient(temps=False))[1]
    assert (K.AMENORRHOEA in kinds(found)) is raised


def test_no_amenorrhoea_when_recorded_pregnant():
    chart, current = regular(temps=False)
    found = run(chart, day(current, 5) + timedelta(days=120), patient(PatientStatus.PREGNANT, temps=False))[1]
    assert K.AMENORRHOEA not in kinds(found, raisable_only=False)


# --- hcg-rise-low (Barnhart 2004: minimum 53% in 2 days; Morse 2012: 35%)


def _hcg(first: float, second: float, hours: int = 48):
    chart, current = regular()
    taken = at(day(current, 28))
    chart.hcg(taken, first).hcg(taken + timedelta(hours=hours), second)
    return chart, (taken + timedelta(hours=hours)).date(), patient(PatientStatus.PREGNANT)


@pytest.mark.parametrize(
    "first, second, raised",
    [
        (100, 130, True),  # 30%: below Barnhart's 53% and below Morse's 35%
        (100, 160, False),  # 60%: above both
        (100, 153, False),  # exactly the 53% minimum meets it
        (400, 300, True),  # falling
    ],
)
def test_hcg_rise_48h_apart(first, second, raised):
    chart, today, who = _hcg(first, second)
    found = of(run(chart, today, who)[1], K.HCG_RISE_LOW)
    assert bool(found) is raised
    if raised:
        assert found[0].severity is Severity.URGENT and found[0].evidence["rise_48h"] == round(second / first - 1, 4)


def test_hcg_pair_24_h_apart_is_scaled_to_48_h():
    chart, today, who = _hcg(100, 120, hours=24)  # 20% in a day: 44% per 48 h, below 53%
    (alert,) = of(run(chart, today, who)[1], K.HCG_RISE_LOW)
    assert alert.evidence["rise_48h"] == 0.44 and alert.evidence["hours"] == 24.0


@pytest.mark.parametrize(
    "hours, second, raised",
    [
        # Barnhart 2004: at least 24% in 1 day and 53% in 2 days. Other intervals scale log-linearly:
        # a factor 1.53 ** (hours / 48), i.e. sqrt(1.53) = 1.237 a day (consistent with 24% in 1 day),
        # 1.53 ** 1.5 = 1.8925 over 3 days and 1.53 ** 2 = 2.3409 over 4 days.
        (24, 124, False),
        (24, 123, True),
        (72, 190, False),
        (72, 189, True),
        (96, 235, False),
        (96, 234, True),
        (96, 110, True),
        (120, 290, False),  # 1.53 ** 2.5 = 2.896
        (120, 289, True),
    ],
)
def test_hcg_minimum_rise_is_scaled_to_any_interval_of_24_h_or_more(hours, second, raised):
    chart, today, who = _hcg(100, second, hours=hours)
    assert bool(of(run(chart, today, who)[1], K.HCG_RISE_LOW)) is raised


@pytest.mark.parametrize("hours", [6, 30, 96, 144])
def test_hcg_any_fall_is_urgent_whatever_the_gap(hours):
    # Barnhart 2004: any fall of serum hCG in early pregnancy is abnormal (200 -> 120 over 96 h).
    chart, today, who = _hcg(200, 120, hours=hours)
    (alert,) = of(run(chart, today, who)[1], K.HCG_RISE_LOW)
    assert alert.severity is Severity.URGENT and alert.evidence["rise_48h"] < 0


def _untimed_same_day(values: tuple[float, ...]):
    """400 IU/L two days before, then `values` logged for one day without times, in that order."""
    chart, current = regular()
    first = day(current, 28)
    chart.add(first, Kind.HCG, Value(number=400))
    for iu_l in values:
        chart.add(first + timedelta(days=2), Kind.HCG, Value(number=iu_l))
    return chart, first + timedelta(days=2), patient(PatientStatus.PREGNANT)


def test_hcg_fall_between_two_untimed_values_of_one_day_is_urgent():
    # Barnhart 2004: any fall is abnormal. 480 then 350 on one day without times: a fall in the
    # order logged, with no interval to scale to 48 h.
    chart, today, who = _untimed_same_day((480, 350))
    found = of(run(chart, today, who)[1], K.HCG_RISE_LOW)
    fall = [a for a in found if a.evidence["second"]["iu_l"] == 350]
    assert len(fall) == 1 and fall[0].severity is Severity.URGENT
    assert fall[0].evidence["first"]["iu_l"] == 480 and fall[0].evidence["rise_48h"] is None
    assert "480 to 350 IU/L" in fall[0].message and "no time between them" in fall[0].message


def test_hcg_pairs_over_the_same_two_days_are_kept_apart():
    # 400 -> 480 in 48 h rises too slowly (20%); 480 -> 350 later that day falls: two alerts, so
    # handling the first never hides the second.
    chart, today, who = _untimed_same_day((480, 350))
    keys = {a.key for a in of(run(chart, today, who)[1], K.HCG_RISE_LOW)}
    assert len(keys) == 2


def test_hcg_rise_between_two_untimed_values_of_one_day_is_not_raised():
    chart, today, who = _untimed_same_day((700, 720))  # 400 -> 700 is 75% in 48 h, then a rise
    assert not of(run(chart, today, who)[1], K.HCG_RISE_LOW)


def test_morse_minimum_as_a_clinic_setting():
    chart, today, who = _hcg(100, 145)  # 45%: low by Barnhart, enough by Morse 2012's 35%
    assert of(run(chart, today, who)[1], K.HCG_RISE_LOW)
    morse = replace(DEFAULT_PROTOCOL, hcg_min_rise_48h=0.35)
    assert not of(run(chart, today, who, protocol=morse)[1], K.HCG_RISE_LOW)


# --- multiple-follicles (Evans 2020: more than 2 mature follicles of 14 mm or more under 40)


@pytest.mark.parametrize("follicles, raised", [((18, 16, 14), True), ((18, 16, 13.9), False), ((18, 16), False)])
def test_multiple_follicles_3_vs_2_mature(follicles, raised):
    chart, today = follicular(11)
    chart.scan(today, *follicles)
    found = of(run(chart, today, patient(plan=Plan.OVULATION_INDUCTION))[1], K.MULTIPLE_FOLLICLES)
    assert bool(found) is raised
    if raised:
        assert found[0].key == f"P0001:multiple-follicles:{today.isoformat()}" and found[0].evidence["mature_count"] == 3


def test_only_the_latest_scan_is_raised():
    chart, today = follicular(12)
    chart.scan(today - timedelta(days=2), 16, 15, 14).scan(today, 19, 17, 15)
    found = of(run(chart, today, patient(plan=Plan.OVULATION_INDUCTION))[1], K.MULTIPLE_FOLLICLES)
    assert sorted((c.evidence["scan_day"], c.raisable) for c in found) == [
        ((today - timedelta(days=2)).isoformat(), False), (today.isoformat(), True)]


# --- logging-gap (3 whole days: common practice)


def _gap(today_cd: int):
    """Entries on days 1 and 2 of the cycle, then none."""
    chart, current = regular(bleed_days=2)
    chart.temps(current, day(current, 2))
    return chart, current, day(current, today_cd)


def test_logging_gap_after_three_whole_days_without_an_entry():
    chart, _, today = _gap(6)  # nothing on days 3, 4 and 5; today is not over
    (alert,) = of(run(chart, today)[1], K.LOGGING_GAP)
    assert alert.severity is Severity.INFO and alert.evidence["whole_days"] == 3
    assert alert.key == f"P0001:logging-gap:{(today - timedelta(days=3)).isoformat()}"


def test_logging_gap_near_miss_two_whole_days():
    chart, _, today = _gap(5)
    assert K.LOGGING_GAP not in kinds(run(chart, today)[1])


def test_logging_gap_is_soon_once_it_covers_the_expected_fertile_days():
    chart, current, today = _gap(9)  # days 3-8; six 28-day cycles: ovulation from day 12 (80% range), fertile from day 7
    (alert,) = of(run(chart, today)[1], K.LOGGING_GAP)
    assert alert.severity is Severity.SOON and alert.evidence["expected_fertile_days"][0] == day(current, 7).isoformat()


def test_no_logging_gap_for_a_paused_patient():
    chart, _, today = _gap(9)
    assert K.LOGGING_GAP not in kinds(run(chart, today, patient(PatientStatus.PAUSED))[1], raisable_only=False)


# --- fever (38.0 C: common practice)


@pytest.mark.parametrize("celsius, raised", [(38.0, True), (37.9, False)])
def test_fever_38_0_vs_37_9(celsius, raised):
    chart, today = follicular(20)
    chart.temp(today + timedelta(days=1), celsius, ("illness",))
    found = of(run(chart, today + timedelta(days=1))[1], K.FEVER)
    assert bool(found) is raised
    if raised:
        assert found[0].key == f"P0001:fever:{(today + timedelta(days=1)).isoformat()}"


@pytest.mark.parametrize("flags", [(), ("illness",)])
def test_a_fever_alert_says_the_reading_is_already_left_out_and_fevers_count_while_pregnant(flags):
    # A fever lifts the reading for reasons of its own (common practice): the shift rules leave it out
    # whether or not it is flagged, so the alert says so and asks only for the flags it still needs.
    chart, today = follicular(5)
    fever_day = today + timedelta(days=1)
    chart.temp(fever_day, 38.6, flags)
    analysis, found = run(chart, fever_day, patient(PatientStatus.PREGNANT))
    (alert,) = of(found, K.FEVER)
    (left_out,) = [e for e in analysis.current.shift.excluded if e.day == fever_day]
    assert left_out.celsius == 38.6 and left_out.reason == ("disturbed: illness" if flags else "fever")
    assert "already left out of the shift rules" in alert.message
    assert "flag the reading" not in alert.message and "so the shift rules leave it out" not in alert.message
    assert alert.message.endswith("flag as illness her other readings taken while unwell.")


def test_a_fever_older_than_the_look_back_is_history():
    chart, today = follicular(2)
    chart.temp(today - timedelta(days=15), 38.5)
    assert [c.raisable for c in of(run(chart, today)[1], K.FEVER)] == [False]


# --- shared


def test_discharged_patients_get_nothing():
    chart, today = follicular(21)
    chart.temp(today, 38.5)
    assert run(chart, today, patient(PatientStatus.DISCHARGED))[1] == []


def test_every_candidate_carries_rule_source_evidence_and_the_caution():
    chart, today = follicular(21)
    chart.temp(today, 38.5)
    _, found = run(chart, today)
    assert found
    for c in found:
        assert c.rule and c.source and c.evidence and c.message.endswith(".") and c.caution == CAUTION
        assert c.key.startswith(f"P0001:{c.kind}:")


@pytest.mark.parametrize("fevers", [(38.1, 38.3, 38.4), (38.0, 38.0, 38.2), (38.6, 39.0, 38.8)])
def test_fever_readings_neither_confirm_a_shift_nor_end_the_window(fevers):
    # Readings at or above 38.0 C (fever threshold, common practice) after 36.40 lows are left out
    # of the shift rules (Miolo 1993 counts undisturbed readings only): no shift, the window alerts
    # stay on, the fever alert is raised, and the chart lists the readings left out and why.
    from caseload.presentation.json_shapes import analysis_json

    chart, current = regular()
    chart.temps(current, day(current, 11))
    for cd, t in zip((12, 13, 14), fevers):
        chart.temp(day(current, cd), t)
    analysis, found = run(chart, day(current, 14))
    assert not analysis.current.shift.confirmed and analysis.phase == "window"
    assert {K.WINDOW_OPEN, K.FEVER} <= kinds(found)
    excluded = analysis_json(analysis)["thermal_shift"]["excluded_readings"]
    assert [(e["day"], e["celsius"], e["reason"]) for e in excluded] == [
        (day(current, cd).isoformat(), t, "fever") for cd, t in zip((12, 13, 14), fevers)
    ]
