"""The alert lifecycle decided in the core: one alert per episode at a time, hold, escalate, reopen,
auto-resolve with a reason, raise again when the condition returns."""

from __future__ import annotations

from dataclasses import replace
from datetime import date, timedelta

import pytest

from caseload.core.alerts import CLINICAL_KINDS, ROUTINE_KINDS, AlertKind, Candidate, Facts, is_clinical
from caseload.core.alerts.lifecycle import effective, ended_reason, parse_future_day, plan_sync
from caseload.core.model import Alert, AlertState, Kind, PatientStatus, Plan, Severity, Value
from caseload.core.parse import InputError
from caseload.core.settings import DEFAULT_PROTOCOL
from tests.core.alert_charts import Chart, at, day, of, patient, run

K = AlertKind
TODAY = date(2026, 12, 1)


def stored(c: Candidate, state: AlertState = AlertState.OPEN, alert_id: int = 1, **changes) -> Alert:
    alert = Alert(alert_id, c.patient_id, c.kind, c.key, c.severity, TODAY, c.due, c.message, c.evidence,
                  c.rule, c.source, state)
    return replace(alert, **changes)


def facts(chart: Chart, today: date, who=None) -> tuple[Facts, list[Candidate]]:
    who = who or patient()
    analysis, found = run(chart, today, who)
    return Facts(who, analysis, sorted(chart.obs, key=lambda o: o.day), today, DEFAULT_PROTOCOL), found


def follicular(cd: int):
    chart = Chart()
    current = chart.history([28] * 6)
    chart.bleed(current)
    chart.temps(current, day(current, cd))
    return chart, current


def test_routine_and_clinical_kinds():
    assert ROUTINE_KINDS == {"logging-gap"}
    assert CLINICAL_KINDS == {k.value for k in AlertKind} - {"logging-gap"}
    assert is_clinical("fever") and not is_clinical("logging-gap") and is_clinical("a-kind-added-later")


def test_new_raisable_candidates_are_raised_and_held_ones_are_not():
    chart, current = follicular(3)  # window-approaching held only (0.2 four days ahead)
    f, found = facts(chart, day(current, 3))
    assert [c.raisable for c in found] == [False]
    assert plan_sync([], found, f).empty


def test_a_resolved_key_is_never_raised_again():
    chart, current = follicular(9)
    f, found = facts(chart, day(current, 9))
    (c,) = of(found, K.WINDOW_OPEN)
    assert plan_sync([], found, f).raises == (c,)
    done = stored(c, AlertState.RESOLVED, handled_by="nurse1", note="told the couple")
    assert plan_sync([done], found, f).empty


def test_an_acknowledged_alert_stays_while_the_condition_holds():
    chart, current = follicular(9)
    f, found = facts(chart, day(current, 9))
    ack = stored(of(found, K.WINDOW_OPEN)[0], AlertState.ACKNOWLEDGED)
    assert plan_sync([ack], found, f).empty


def test_a_window_held_through_a_dip_below_0_5():
    chart, current = follicular(9)
    f, found = facts(chart, day(current, 9))
    raised = stored(of(found, K.WINDOW_OPEN)[0])
    chart, _ = follicular(16)  # P(fertile) today 0.48: below the opening level, above 0.2
    f16, found16 = facts(chart, day(current, 16))
    assert [c.raisable for c in of(found16, K.WINDOW_OPEN)] == [False]
    assert plan_sync([raised], found16, f16).empty


def test_auto_resolved_when_the_shift_is_confirmed():
    chart, current = follicular(10)
    f, found = facts(chart, day(current, 10))
    raised = stored(of(found, K.WINDOW_OPEN)[0])
    chart.temps(day(current, 11), day(current, 17), high_from=day(current, 15))
    f17, found17 = facts(chart, day(current, 17))
    (alert, reason), = plan_sync([raised], found17, f17).resolutions
    assert alert is raised and reason == f"auto: thermal shift confirmed on {day(current, 17).isoformat()}"


def test_auto_resolved_when_a_period_starts():
    chart, current = follicular(21)
    f, found = facts(chart, day(current, 21))
    raised = stored(of(found, K.NO_THERMAL_SHIFT)[0])
    nxt = day(current, 30)
    chart.bleed(nxt)
    f2, found2 = facts(chart, nxt)
    (_, reason), = plan_sync([raised], found2, f2).resolutions
    assert reason == f"auto: a period started on {nxt.isoformat()}"


def test_logging_gap_auto_resolved_by_an_entry_and_escalated_over_the_fertile_days():
    chart = Chart()
    current = chart.history([28] * 6)
    chart.bleed(current, 2)
    f6, found6 = facts(chart, day(current, 6))
    info = stored(of(found6, K.LOGGING_GAP)[0])
    assert info.severity is Severity.INFO
    f9, found9 = facts(chart, day(current, 9))
    (alert, worse), = plan_sync([info], found9, f9).escalations
    assert worse.key == info.key and worse.severity is Severity.SOON
    chart.temps(day(current, 9), day(current, 9))
    f10, found10 = facts(chart, day(current, 10))
    (_, reason), = plan_sync([info], found10, f10).resolutions
    assert reason == f"auto: an entry was logged for {day(current, 9).isoformat()}"


def test_no_downgrade_and_no_escalation_from_a_held_candidate():
    chart, current = follicular(9)
    f, found = facts(chart, day(current, 9))
    c = of(found, K.WINDOW_OPEN)[0]
    urgent = stored(c, severity=Severity.URGENT)
    assert plan_sync([urgent], found, f).empty
    low = stored(replace(c, raisable=False), severity=Severity.INFO)
    assert plan_sync([low], [replace(c, raisable=False)], f).empty


def test_a_snooze_whose_day_has_come_is_reopened():
    chart, current = follicular(9)
    today = day(current, 9)
    f, found = facts(chart, today)
    c = of(found, K.WINDOW_OPEN)[0]
    later = stored(c, AlertState.SNOOZED, snooze_until=today + timedelta(days=1))
    due = stored(c, AlertState.SNOOZED, snooze_until=today)
    assert plan_sync([later], found, f).empty
    assert plan_sync([due], found, f).reopens == (due,)
    assert effective(due, today).state is AlertState.OPEN and effective(later, today).state is AlertState.SNOOZED


@pytest.mark.parametrize(
    "status, reason",
    [(PatientStatus.DISCHARGED, "auto: patient discharged"), (PatientStatus.PAUSED, "auto: patient paused"),
     (PatientStatus.PREGNANT, "auto: patient recorded pregnant")],
)  # fmt: skip
def test_status_changes_end_window_alerts(status, reason):
    chart, current = follicular(9)
    f, found = facts(chart, day(current, 9))
    raised = stored(of(found, K.WINDOW_OPEN)[0])
    f2, found2 = facts(chart, day(current, 9), patient(status))
    assert plan_sync([raised], found2, f2).resolutions == ((raised, reason),)


def test_irregular_cycles_resolved_when_the_classification_changes():
    chart = Chart()
    start = chart.history([26, 30, 34, 28])
    chart.bleed(start)
    f, found = facts(chart, start + timedelta(days=1))
    raised = stored(of(found, K.IRREGULAR_CYCLES)[0])
    later = chart.history([28] * 12, start)  # the 12-cycle window now holds regular cycles only
    chart.bleed(later)
    f2, found2 = facts(chart, later + timedelta(days=1))
    assert not of(found2, K.IRREGULAR_CYCLES)
    (_, reason), = plan_sync([raised], found2, f2).resolutions
    assert reason == "auto: cycles now classify as frequency normal, regularity regular (FIGO 2018)"


def test_a_voided_fever_reading_resolves_with_the_correction_reason():
    chart, current = follicular(5)
    chart.temp(day(current, 6), 38.4)
    f, found = facts(chart, day(current, 6))
    raised = stored(of(found, K.FEVER)[0])
    chart.obs = [o for o in chart.obs if not (o.value.number == 38.4)]
    f2, found2 = facts(chart, day(current, 6))
    assert ended_reason(raised, f2) == "the entries behind it were corrected or voided"


@pytest.mark.parametrize("text, days", [("tomorrow", 1), ("+3", 3), ("2026-12-31", 30), (" +90 ", 90)])
def test_parse_future_day(text, days):
    assert parse_future_day(text, TODAY, Severity.INFO) == TODAY + timedelta(days=days)


@pytest.mark.parametrize(
    "text, fragment",
    [("today", "not understood"), ("2026-12-01", "is not after today"), ("2026-11-20", "is not after today"),
     ("+91", "snoozed at most 90 days"), ("2027-12-01", "365 days away"), ("2026-02-30", "not understood"), ("", "not understood")],
)  # fmt: skip
def test_parse_future_day_refusals_are_one_line(text, fragment):
    with pytest.raises(InputError) as err:
        parse_future_day(text, TODAY, Severity.INFO)
    assert fragment in str(err.value) and "\n" not in str(err.value)


@pytest.mark.parametrize(
    "severity, most",
    [(Severity.URGENT, 2), (Severity.TODAY, 7), (Severity.SOON, 30), (Severity.INFO, 90)],
)
def test_an_alert_is_snoozed_no_further_than_its_severity_allows(severity, most):
    # An urgent alert comes back by the next serial hCG at the latest (48 h apart, Barnhart 2004);
    # the others: common practice.
    assert parse_future_day(f"+{most}", TODAY, severity) == TODAY + timedelta(days=most)
    with pytest.raises(InputError) as err:
        parse_future_day(f"+{most + 1}", TODAY, severity)
    assert str(err.value) == (f"{(TODAY + timedelta(days=most + 1)).isoformat()} is {most + 1} days away: an alert of "
                              f"severity {severity.value} is snoozed at most {most} days; acknowledge or resolve it instead")


# --- every kind: resolved automatically, the condition returns, raised again (one episode = one key)


def _copy(chart: Chart, keep=lambda o: True) -> Chart:
    return Chart([o for o in chart.obs if keep(o)], list(chart.starts))


def _positive_test_on(today: date):
    """A positive urine hCG logged today: none of the non-pregnancy kinds applies (common practice),
    so the alert is resolved; voiding the test (a wrong-patient entry) brings the condition back."""
    return lambda chart: _copy(chart).add(today, Kind.HCG, Value(word="positive"))


def _regular(lengths=(28,) * 6, temps: bool = True, bleed_days: int = 5):
    chart = Chart()
    current = chart.history(list(lengths), temps=temps)
    chart.bleed(current, bleed_days)
    return chart, current


def _window_approaching():
    chart, current = follicular(4)  # P(fertile) reaches 0.2 within three days
    today = day(current, 4)
    lh = lambda c: _copy(c).lh(today)  # noqa: E731 - an LH surge logged (then voided): the window is open, not approaching
    return chart, today, patient(), lh


def _window_open():
    chart, current = follicular(9)
    return chart, day(current, 9), patient(), _positive_test_on(day(current, 9))


def _no_thermal_shift():
    chart, current = follicular(21)
    return chart, day(current, 21), patient(), _positive_test_on(day(current, 21))


def _monophasic_cycle():
    chart = Chart()
    start = chart.history([28] * 5)
    chart.bleed(start).temps(start, day(start, 28))
    nxt = start + timedelta(days=28)
    chart.bleed(nxt)
    return chart, nxt + timedelta(days=1), patient(), _positive_test_on(nxt + timedelta(days=1))


def _irregular_cycles():
    chart, current = _regular((26, 30, 34, 28))  # variation 8 days at 34 (FIGO 2018: up to 7 at 26-41)
    today = current + timedelta(days=1)
    return chart, today, patient(), _positive_test_on(today)


def _short_luteal_phase():
    chart = Chart()
    start = chart.history([28] * 5)
    chart.cycle(start, 28, 18)  # a 10-day luteal phase (ASRM 2021: 10 days or fewer is short)
    nxt = start + timedelta(days=28)
    chart.bleed(nxt)
    return chart, nxt + timedelta(days=1), patient(), _positive_test_on(nxt + timedelta(days=1))


def _prolonged_bleeding():
    chart, current = _regular(bleed_days=9)  # FIGO 2018: normal up to 8 days
    ninth = day(current, 9)
    return chart, ninth, patient(), lambda c: _copy(c, lambda o: not (o.kind is Kind.BLEED and o.day == ninth))


def _period_overdue():
    chart, current = _regular(temps=False)
    today = day(current, 34)  # a day past the next period's 90% upper bound
    return chart, today, patient(temps=False), _positive_test_on(today)


def _sustained_high_temps():
    chart, current = _regular()
    chart.temps(current, day(current, 32), high_from=day(current, 15))  # 18 days above the coverline
    return chart, day(current, 32), patient(), _positive_test_on(day(current, 32))


def _amenorrhoea():
    chart, current = _regular(temps=False)
    today = day(current, 5) + timedelta(days=90)  # FIGO 2018 absent bleeding, 90 days from memory
    return chart, today, patient(temps=False), _positive_test_on(today)


def _hcg_rise_low():
    chart, current = _regular()
    taken = at(day(current, 28))
    chart.hcg(taken, 100).hcg(taken + timedelta(hours=48), 130)  # 30% in 48 h (Barnhart 2004: at least 53%)
    fixed = lambda c: _copy(c, lambda o: o.value.number != 130).hcg(taken + timedelta(hours=48), 180)  # noqa: E731
    return chart, day(current, 30), patient(PatientStatus.PREGNANT), fixed


def _multiple_follicles():
    chart, current = follicular(11)
    today = day(current, 11)
    chart.scan(today, 18, 16, 14)  # three mature follicles (Evans 2020: more than 2)
    fixed = lambda c: _copy(c, lambda o: o.kind is not Kind.SCAN).scan(today, 18, 16, 12)  # noqa: E731
    return chart, today, patient(plan=Plan.OVULATION_INDUCTION), fixed


def _logging_gap():
    chart, current = _regular(bleed_days=2)
    chart.temps(current, day(current, 2))  # nothing on days 3-5 (3 whole days: common practice)
    return chart, day(current, 6), patient(), lambda c: _copy(c).temps(day(current, 4), day(current, 4))


def _fever():
    chart, current = follicular(5)
    chart.temp(day(current, 6), 38.4)  # 38.0 C: common practice
    return chart, day(current, 6), patient(), lambda c: _copy(c, lambda o: o.value.number != 38.4)


def _intermenstrual_bleeding():
    chart, current = _regular()
    for n in range(3):  # FIGO 2018 abnormal bleeding symptom; 3 days in a cycle by default (common practice)
        chart.add(day(current, 14 + n), Kind.BLEED, Value(word="light"))
    chart.obs = [replace(o, flags=("midcycle",)) if o.kind is Kind.BLEED and o.day >= day(current, 14) else o
                 for o in chart.obs]  # fmt: skip
    third = day(current, 16)
    return chart, third, patient(), lambda c: _copy(c, lambda o: not (o.kind is Kind.BLEED and o.day == third))


def _bleeding_in_pregnancy():
    chart, current = _regular()
    chart.add(day(current, 30), Kind.HCG, Value(word="positive"))
    chart.hcg(at(day(current, 31)), 120).hcg(at(day(current, 33)), 240)  # doubling: Barnhart 2004 normal
    chart.bleed(day(current, 35), 2, "light")  # a bleed after a positive test: common practice
    bled = {day(current, 35), day(current, 36)}
    return chart, day(current, 36), patient(), lambda c: _copy(c, lambda o: not (o.kind is Kind.BLEED and o.day in bled))


EPISODES = {
    K.WINDOW_APPROACHING: _window_approaching, K.WINDOW_OPEN: _window_open, K.NO_THERMAL_SHIFT: _no_thermal_shift,
    K.MONOPHASIC_CYCLE: _monophasic_cycle, K.IRREGULAR_CYCLES: _irregular_cycles,
    K.SHORT_LUTEAL_PHASE: _short_luteal_phase, K.PROLONGED_BLEEDING: _prolonged_bleeding,
    K.PERIOD_OVERDUE: _period_overdue, K.SUSTAINED_HIGH_TEMPS: _sustained_high_temps, K.AMENORRHOEA: _amenorrhoea,
    K.HCG_RISE_LOW: _hcg_rise_low, K.MULTIPLE_FOLLICLES: _multiple_follicles, K.LOGGING_GAP: _logging_gap,
    K.FEVER: _fever, K.INTERMENSTRUAL_BLEEDING: _intermenstrual_bleeding, K.BLEEDING_IN_PREGNANCY: _bleeding_in_pregnancy,
}  # fmt: skip


def test_every_kind_has_an_episode_test():
    assert set(EPISODES) == set(AlertKind)


@pytest.mark.parametrize("kind", list(EPISODES))
def test_resolved_automatically_condition_returns_raised_again(kind):
    chart, today, who, correction = EPISODES[kind]()
    f, found = facts(chart, today, who)
    (c,) = [x for x in of(found, kind) if x.raisable]
    assert c in plan_sync([], found, f).raises
    raised = stored(c)
    f2, found2 = facts(correction(chart), today, who)
    (alert, reason), = plan_sync([raised], found2, f2).resolutions
    assert alert is raised and reason.startswith("auto: ")
    ended = replace(raised, state=AlertState.RESOLVED, resolved_reason=reason)
    again = [x for x in plan_sync([ended], found, f).raises if x.kind == kind]
    assert [x.key for x in again] == [c.key]  # the same episode, raised again as a new alert


def test_a_person_resolved_alert_comes_back_only_when_the_evidence_worsens():
    chart, current = _regular(bleed_days=2)
    chart.temps(current, day(current, 2))
    f6, found6 = facts(chart, day(current, 6))
    (info,) = of(found6, K.LOGGING_GAP)
    done = stored(info, AlertState.RESOLVED, handled_by="phone1", note="left a message")
    assert not of(list(plan_sync([done], found6, f6).raises), K.LOGGING_GAP)  # same gap, same severity: stays resolved
    f9, found9 = facts(chart, day(current, 9))  # the gap now covers the expected fertile days
    (back,) = of(list(plan_sync([done], found9, f9).raises), K.LOGGING_GAP)
    assert back.key == info.key and back.severity is Severity.SOON


def test_irregular_cycles_a_new_run_is_a_new_episode_even_after_a_person_resolved_the_first():
    chart = Chart()
    start = chart.history([26, 30, 34, 28])  # irregular: variation 8 days at 34 (FIGO 2018)
    chart.bleed(start)
    f, found = facts(chart, start + timedelta(days=1))
    (first,) = of(found, K.IRREGULAR_CYCLES)
    done = stored(first, AlertState.RESOLVED, handled_by="nurse1", note="referred")
    regular_again = chart.history([28] * 12, start)  # the 12-cycle window holds regular cycles only
    chart.bleed(regular_again)
    f2, found2 = facts(chart, regular_again + timedelta(days=1))
    assert not of(found2, K.IRREGULAR_CYCLES)
    later = chart.history([22], regular_again)  # one 22-day cycle: variation 6, still regular
    later = chart.history([36], later)  # a 36-day cycle: variation 14 days, irregular again
    chart.bleed(later)
    f3, found3 = facts(chart, later + timedelta(days=1))
    (second,) = of(found3, K.IRREGULAR_CYCLES)
    assert second.key == f"P0001:irregular-cycles:{later.isoformat()}" != first.key
    assert plan_sync([done], found3, f3).raises == (second,)


def test_an_alert_under_an_older_key_hands_over_and_does_not_count_as_vanishing():
    chart, current = _regular((26, 30, 34, 28))  # irregular: variation 8 days at 34 (FIGO 2018)
    f, found = facts(chart, current + timedelta(days=1))
    (c,) = of(found, K.IRREGULAR_CYCLES)
    older = stored(replace(c, key="P0001:irregular-cycles:irregular"))  # keyed on the label, as stores once were
    plan = plan_sync([older], found, f)
    assert plan.resolutions == ((older, "auto: the finding goes on in the alert keyed on the first cycle of its run"),)
    assert c in plan.raises and plan.vanishing == 0


def test_the_window_approaching_hands_over_to_the_window_open_and_does_not_count_as_vanishing():
    chart, current = follicular(4)
    f, found = facts(chart, day(current, 4))
    (approaching,) = of(found, K.WINDOW_APPROACHING)
    earlier = stored(approaching)
    chart.temps(day(current, 5), day(current, 9))
    f2, found2 = facts(chart, day(current, 9))  # P(fertile) above 0.5: the window is open (common practice)
    plan = plan_sync([earlier], found2, f2)
    assert [a for a, _ in plan.resolutions] == [earlier] and of(list(plan.raises), K.WINDOW_OPEN)
    assert plan.vanishing == 0
    assert plan_sync([earlier], [], f2).vanishing == 1  # nothing in its place: it leaves the lists
