"""Every alert kind's evidence read as sentences: the evidence a core rule really stores for an
invented chart (the episodes of the alert lifecycle tests), worded with units and dates."""

from __future__ import annotations

from datetime import timedelta

import pytest

from caseload.core.alerts import ALERT_KINDS, AlertKind
from caseload.presentation.alert_evidence import EXPLAIN, evidence_sentences
from tests.core.alert_charts import at, day, of, patient
from tests.core.test_alerts_lifecycle import EPISODES, facts, follicular

K = AlertKind

# The sentence each episode's evidence must give. Each figure is checked by hand against the chart
# the episode draws (28-day cycles, the current one from 17 Aug 2026) and the published threshold
# named beside it.
EXPECTED = {
    # P(fertile) 0.2049 rounds to 20%; the window approaches at 0.2 (common practice).
    K.WINDOW_APPROACHING: "The chance of a fertile day is 2% today and reaches 20% on 23 Aug (cycle day 7).",
    # Wilcox 1995: the fertile window is the six days ending on ovulation, 25 to 30 Aug.
    K.WINDOW_OPEN: "Most likely ovulation day: 30 Aug (cycle day 14); fertile window 25 Aug to 30 Aug (six days "
                   "ending on ovulation).",
    # 17 Aug + 20 days = 6 Sep is cycle day 21; the 80% bound + 3 days of grace (common practice).
    K.NO_THERMAL_SHIFT: "Ovulation was expected by 2 Sep (cycle day 17) at the latest; the rise was awaited until 5 Sep.",
    K.MONOPHASIC_CYCLE: "Its 28 temperature readings, on 100% of its days, show no rise (a monophasic chart).",
    # FIGO 2018 (Munro 2018): variation up to 7 days is regular at 26-41; 26 to 34 is 8.
    K.IRREGULAR_CYCLES: "Frequency normal; regularity irregular: the lengths vary by 8 days, where FIGO 2018 counts "
                        "up to 7 as regular at age 34.",
    # 6 Aug is cycle day 18 of a cycle from 20 Jul; 7 to 16 Aug is 10 days (ASRM 2021: 10 or fewer is short).
    K.SHORT_LUTEAL_PHASE: "The luteal phase lasted 10 days, to the next period on 17 Aug.",
    # FIGO 2018: a bleed of more than 8 days is prolonged; 17 to 25 Aug inclusive is 9.
    K.PROLONGED_BLEEDING: "Bleeding on 9 days, from 17 Aug to 25 Aug.",
    K.PERIOD_OVERDUE: "The next period was expected on 14 Sep, by 18 Sep at the latest (90% range).",
    # 31 Aug to 17 Sep inclusive is 18 days above the coverline (18 days: common practice).
    K.SUSTAINED_HIGH_TEMPS: "Temperatures above the coverline of 36.40 °C for 18 days, since 31 Aug (last reading 17 Sep).",
    # 21 Aug + 90 days = 19 Nov (FIGO 2018 absent bleeding, 90 days from memory).
    K.AMENORRHOEA: "No bleeding for 90 days: the last bleeding day was 21 Aug (the alert is raised from 90 days).",
    # 130 / 100 = 1.30 in 48 h; Barnhart 2004: at least 53% in 2 days.
    K.HCG_RISE_LOW: "That is a rise of 30% per 48 hours; the minimum expected is 53% per 48 hours (53% over these "
                    "48 hours).",
    # Evans 2020: more than 2 follicles of 14 mm or more; the scan had 18, 16 and 14 mm.
    K.MULTIPLE_FOLLICLES: "Scan on 27 Aug: 3 mature follicles of 14 mm or more, the lead one 18 mm.",
    # 19, 20 and 21 Aug are the 3 whole days without an entry (3 days: common practice).
    K.LOGGING_GAP: "Last entry on 18 Aug: 3 days with none since, from 19 Aug, in the cycle that began 17 Aug.",
    # 38.0 C and above is a fever (common practice).
    K.FEVER: "38.40 °C on 22 Aug, at or above the fever threshold of 38.00 °C.",
    # 30 Aug to 1 Sep is 3 days of light bleeding (3 days: common practice; FIGO 2018 symptom).
    K.INTERMENSTRUAL_BLEEDING: "30 Aug to 1 Sep: 3 days of flow, 0 heavy.",
    K.BLEEDING_IN_PREGNANCY: "Bleeding on 2 days (0 heavy), 20 Sep to 21 Sep, after the pregnancy began on 15 Sep.",
}


def test_every_alert_kind_has_its_wording_and_a_sentence_checked_here():
    assert set(EXPLAIN) == set(ALERT_KINDS) == {k.value for k in EXPECTED} == {k.value for k in EPISODES}


def _evidence(kind: AlertKind, chart, today, who) -> dict:
    f, found = facts(chart, today, who)
    (candidate,) = [c for c in of(found, kind) if c.raisable]
    return candidate.evidence


@pytest.mark.parametrize("kind", list(EXPECTED))
def test_the_evidence_a_rule_stores_reads_as_sentences(kind):
    chart, today, who, _ = EPISODES[kind]()
    lines = evidence_sentences(kind.value, _evidence(kind, chart, today, who))
    assert EXPECTED[kind] in lines
    text = " ".join(lines)
    assert "{" not in text and "_" not in text and "None" not in text  # no raw data, no key names


def test_a_falling_hcg_is_called_a_fall():
    chart, current = follicular(28)
    taken = at(day(current, 28))
    chart.hcg(taken, 200).hcg(taken + timedelta(hours=48), 150)  # 150 / 200 = 0.75: a fall of 25% in 48 h
    lines = evidence_sentences("hcg-rise-low", _evidence(K.HCG_RISE_LOW, chart, day(current, 30), patient()))
    assert lines[0] == "Serum hCG 200 IU/L on 13 Sep 09:00, then 150 IU/L on 15 Sep 09:00, 48 hours later."
    assert lines[1].startswith("That is a fall of 25% per 48 hours;")


def test_a_fall_logged_with_no_time_between_is_called_a_fall_without_a_rate():
    chart, current = follicular(28)
    taken = at(day(current, 28))
    chart.hcg(taken, 480).hcg(taken, 350)  # two results of one time: no interval to scale
    lines = evidence_sentences("hcg-rise-low", _evidence(K.HCG_RISE_LOW, chart, day(current, 28), patient()))
    assert lines[:2] == ["Serum hCG 480 IU/L on 13 Sep 09:00, then 350 IU/L on 13 Sep 09:00, logged in that order "
                         "with no time between them.", "Any fall is reviewed, however soon after the value before it."]


def test_a_flagged_fever_and_a_window_opened_by_an_lh_test():
    chart, current = follicular(9)
    chart.temp(day(current, 9), 38.6, ("illness",)).lh(day(current, 9))
    ev = _evidence(K.FEVER, chart, day(current, 9), patient())
    assert evidence_sentences("fever", ev)[:2] == [
        "38.60 °C on 25 Aug, at or above the fever threshold of 38.00 °C.", "The reading is flagged: illness."]
    ev = _evidence(K.WINDOW_OPEN, chart, day(current, 9), patient())
    assert "First positive LH test this cycle on 25 Aug." in evidence_sentences("window-open", ev)


def test_the_protocol_version_is_named_and_old_evidence_gets_one_line():
    assert evidence_sentences("fever", {"protocol_version": 3})[-1] == "Found under clinic protocol version 3."
    lines = evidence_sentences("prolonged-bleeding", {"bleed_days": 9})
    assert lines == ["The evidence stored with this alert is in a form this version cannot word: see `alerts --json`."]
