"""An alert's evidence as sentences a nurse reads: the numbers with their units, the days as dates;
and what happened to the alert since, one line a step.

One function per alert kind turns the evidence dict its rule stored (`caseload.core.alerts`) into
sentences; the interface's evidence panel and the command line's `alerts --why` both use
`evidence_sentences`. The stored evidence stays the contract (`alerts --json`); this is only wording.
"""

from __future__ import annotations

from collections.abc import Callable
from datetime import date, datetime

from caseload.core.cycles import cycle_day
from caseload.core.model import AlertStep
from caseload.presentation.days import short_day
from caseload.presentation.glossary import ovulation_evidence_words

def _day(value: str | None) -> str:
    return "-" if not value else short_day(date.fromisoformat(value))


def _taken(value: str) -> str:
    taken = datetime.fromisoformat(value)
    return f"{short_day(taken.date())} {taken:%H:%M}"


def _celsius(value: float) -> str:
    return f"{value:.2f} °C"


def _days(n: int) -> str:
    return f"{n} day" if n == 1 else f"{n} days"


def _cycle(ev: dict) -> str:
    return f"the cycle that began {_day(ev['cycle_start'])}"


def _on_cycle_day(ev: dict, key: str) -> str:
    day = date.fromisoformat(ev[key])
    return f"{short_day(day)} (cycle day {cycle_day(date.fromisoformat(ev['cycle_start']), day)})"


def _lh_and_mucus(ev: dict) -> list[str]:
    signs = []
    if ev.get("lh_surge"):
        signs.append(f"First positive LH test this cycle on {_day(ev['lh_surge'])}.")
    if ev.get("mucus_peak"):
        signs.append(f"Mucus peak day on {_day(ev['mucus_peak'])}.")
    return signs


def window_approaching(ev: dict) -> list[str]:
    return [
        f"Today is cycle day {ev['cycle_day']} (the cycle began {_day(ev['cycle_start'])}).",
        f"The chance of a fertile day is {ev['p_fertile_today']:.0%} today and reaches {ev['p_fertile']:.0%} on "
        f"{_on_cycle_day(ev, 'reaches_on')}.",
        f"Most likely ovulation day: {_on_cycle_day(ev, 'ovulation')}." if ev.get("ovulation") else
        "No ovulation day can be forecast yet.",
    ]


def window_open(ev: dict) -> list[str]:
    lines = [
        f"Today is cycle day {ev['cycle_day']} (the cycle began {_day(ev['cycle_start'])}).",
        f"The chance of a fertile day today is {ev['p_fertile_today']:.0%}; the window counts as open from "
        f"{ev['open_threshold']:.0%}.",
    ]
    lines += _lh_and_mucus(ev)
    if ev.get("ovulation"):
        line = f"Most likely ovulation day: {_on_cycle_day(ev, 'ovulation')}"
        window = ev.get("fertile_window")
        if window:
            line += f"; fertile window {_day(window[0])} to {_day(window[1])} (six days ending on ovulation)"
        lines.append(line + ".")
    return lines


def no_thermal_shift(ev: dict) -> list[str]:
    lines = [
        f"Today is cycle day {ev['cycle_day']} (the cycle began {_day(ev['cycle_start'])}) and the temperature "
        "has not risen.",
        f"Ovulation was expected by {_on_cycle_day(ev, 'expected_ovulation_by')} at the latest; the rise was awaited "
        f"until {_day(ev['deadline'])}.",
        f"{ev['readings']} temperature readings, on {ev['coverage']:.0%} of the days since day 1.",
    ]
    return lines + (_lh_and_mucus(ev) or ["No positive LH test this cycle."])


def monophasic_cycle(ev: dict) -> list[str]:
    return [
        f"The cycle that began {_day(ev['cycle_start'])} lasted {_days(ev['cycle_length'])}.",
        f"Its {ev['readings']} temperature readings, on {ev['coverage']:.0%} of its days, show no rise "
        "(a monophasic chart).",
    ]


def irregular_cycles(ev: dict) -> list[str]:
    return [
        f"Over the last {ev['cycles']} completed cycles: median length {ev['median']:g} days, shortest "
        f"{ev['shortest']}, longest {ev['longest']}.",
        f"Frequency {ev['frequency']}; regularity {ev['regularity']}: the lengths vary by {_days(ev['variation'])}, "
        f"where FIGO 2018 counts up to {ev['variation_limit']} as regular at age {ev['age']}.",
        f"Outside the normal range since {_day(ev['abnormal_since'])}.",
    ]


def short_luteal_phase(ev: dict) -> list[str]:
    method = ovulation_evidence_words(ev.get("ovulation_method"))
    return [
        f"In the cycle that began {_day(ev['cycle_start'])} ({_days(ev['cycle_length'])}), ovulation was dated "
        f"{_on_cycle_day(ev, 'ovulation')} by {method}.",
        f"The luteal phase lasted {_days(ev['luteal_length'])}, to the next period on {_day(ev['next_period'])}.",
    ]


def prolonged_bleeding(ev: dict) -> list[str]:
    return [
        f"Bleeding on {_days(ev['bleed_days'])}, from {_day(ev['cycle_start'])} to {_day(ev['bleed_end'])}.",
        f"FIGO 2018 counts up to {_days(ev['limit'])} as normal.",
    ]


def period_overdue(ev: dict) -> list[str]:
    lines = [
        f"Today is cycle day {ev['cycle_day']} (the cycle began {_day(ev['cycle_start'])}) and no bleeding is logged.",
        f"The next period was expected on {_day(ev['next_period'])}, by {_day(ev['next_period_latest'])} at the "
        "latest (90% range).",
    ]
    if ev.get("first_high"):
        lines.append(f"The temperature rose on {_day(ev['first_high'])}: the longest usual luteal phase ends by "
                     f"{_day(ev['after_shift_limit'])}.")
    return lines + [f"{_days(ev['days_late'])} late."]


def sustained_high_temps(ev: dict) -> list[str]:
    return [
        f"Temperatures above the coverline of {_celsius(ev['coverline'])} for {_days(ev['days_above_coverline'])}, "
        f"since {_day(ev['above_since'])} (last reading {_day(ev['last_reading'])}).",
        f"The rise began on {_day(ev['first_high'])} and was confirmed on {_day(ev['confirmed_on'])}.",
    ]


def amenorrhoea(ev: dict) -> list[str]:
    return [
        f"No bleeding for {_days(ev['days_without_bleed'])}: the last bleeding day was {_day(ev['last_bleed_day'])} "
        f"(the alert is raised from {_days(ev['limit'])}).",
        f"Last entry of any kind: {_day(ev.get('last_entry_day'))}.",
    ]


def _rise(rise: float) -> str:
    return f"a rise of {rise:.0%}" if rise >= 0 else f"a fall of {-rise:.0%}"


def _hcg_pair(first: dict, second: dict) -> str:
    return (f"Serum hCG {first['iu_l']:g} IU/L on {_taken(first['taken'])}, then {second['iu_l']:g} IU/L on "
            f"{_taken(second['taken'])}")


def hcg_rise_low(ev: dict) -> list[str]:
    if ev["rise_48h"] is None:
        return [f"{_hcg_pair(ev['first'], ev['second'])}, logged in that order with no time between them.",
                "Any fall is reviewed, however soon after the value before it."]
    return [
        f"{_hcg_pair(ev['first'], ev['second'])}, {ev['hours']:g} hours later.",
        f"That is {_rise(ev['rise_48h'])} per 48 hours; the minimum expected is {ev['minimum_48h']:.0%} per 48 hours "
        f"({ev['minimum_over_interval']:.0%} over these {ev['hours']:g} hours).",
    ]


def multiple_follicles(ev: dict) -> list[str]:
    return [
        f"Scan on {_day(ev['scan_day'])}: {ev['mature_count']} mature follicles of {ev['mature_mm']:g} mm or more, "
        f"the lead one {ev['lead_mm']:g} mm.",
        f"The protocol allows {ev['allowed']} ({ev['rule']} rule; age {ev['age']}).",
    ]


def logging_gap(ev: dict) -> list[str]:
    lines = [f"Last entry on {_day(ev['last_entry_day'])}: {_days(ev['whole_days'])} with none since, from "
             f"{_day(ev['gap_start'])}, in {_cycle(ev)}."]
    fertile = ev.get("expected_fertile_days")
    if fertile:
        lines.append(f"The fertile days her pattern expects this cycle: {_day(fertile[0])} to {_day(fertile[1])}.")
    return lines


def fever(ev: dict) -> list[str]:
    flags = ev.get("flags") or []
    return [
        f"{_celsius(ev['celsius'])} on {_day(ev['day'])}, at or above the fever threshold of "
        f"{_celsius(ev['threshold_c'])}.",
        f"The reading is flagged: {', '.join(flags)}." if flags else "The reading is not flagged as disturbed.",
    ]


def intermenstrual_bleeding(ev: dict) -> list[str]:
    lines = [
        f"Bleeding between periods in {_cycle(ev)}: {_days(ev['flow_days'])}, {ev['heavy_days']} of them heavy "
        f"(raised from {_days(ev['limit_days'])}, or {_days(ev['limit_heavy_days'])} heavy).",
    ]
    lines += [f"{_day(b['start'])} to {_day(b['end'])}: {_days(b['flow_days'])} of flow, {b['heavy_days']} heavy."
              for b in ev.get("bleeds", [])]
    return lines


def bleeding_in_pregnancy(ev: dict) -> list[str]:
    lines = [
        f"Bleeding on {_days(ev['bleed_days'])} ({ev['heavy_days']} heavy), {_day(ev['bleed_start'])} to "
        f"{_day(ev['bleed_end'])}, after the pregnancy began on {_day(ev['pregnancy_start'])}.",
    ]
    rise = ev.get("hcg_rise_48h")
    lines.append("No serum hCG trend logged." if rise is None else
                 f"Serum hCG over the latest values: {_rise(rise)} per 48 hours.")
    lines += [f"{_hcg_pair(p['first'], p['second'])}: " + (
        "a fall, logged with no time between them." if p["rise_48h"] is None
        else f"{_rise(p['rise_48h'])} per 48 hours, below the minimum.") for p in ev.get("hcg_abnormal_pairs", [])]
    return lines


EXPLAIN: dict[str, Callable[[dict], list[str]]] = {
    "window-approaching": window_approaching,
    "window-open": window_open,
    "no-thermal-shift": no_thermal_shift,
    "monophasic-cycle": monophasic_cycle,
    "irregular-cycles": irregular_cycles,
    "short-luteal-phase": short_luteal_phase,
    "prolonged-bleeding": prolonged_bleeding,
    "period-overdue": period_overdue,
    "sustained-high-temps": sustained_high_temps,
    "amenorrhoea": amenorrhoea,
    "hcg-rise-low": hcg_rise_low,
    "multiple-follicles": multiple_follicles,
    "logging-gap": logging_gap,
    "fever": fever,
    "intermenstrual-bleeding": intermenstrual_bleeding,
    "bleeding-in-pregnancy": bleeding_in_pregnancy,
}


def evidence_sentences(kind: str, evidence: dict) -> list[str]:
    """The sentences for an alert's evidence, with the protocol version that found it last.

    An alert stored by an older version may lack a number its kind's wording needs: it then gets
    one line saying so rather than a half sentence."""
    explain = EXPLAIN.get(kind)
    try:
        lines = explain(evidence) if explain else []
    except (KeyError, TypeError, ValueError, IndexError):
        lines = []
    if not lines:
        lines = ["The evidence stored with this alert is in a form this version cannot word: see `alerts --json`."]
    version = evidence.get("protocol_version")
    if version is not None:
        lines.append(f"Found under clinic protocol version {version}.")
    return lines


STEP_WORDS = {
    "raise": "raised",
    "escalate": "raised again, more severe",
    "ack": "acknowledged",
    "snooze": "snoozed",
    "reopen": "back on the queue: the snooze ended",
    "resolve": "resolved",
    "auto-resolve": "resolved automatically",
}


def step_sentence(step: AlertStep) -> str:
    """One step of an alert's history: when, what, who, and the note or reason (user text left to
    the front end's sanitiser)."""
    line = f"{short_day(step.at.date())} {step.at:%H:%M} {STEP_WORDS.get(step.action, step.action)}"
    if step.action in ("ack", "snooze", "resolve"):
        line += f" by {step.by}"
    if step.snooze_until is not None:
        line += f" until {short_day(step.snooze_until)}"
    if step.reason:
        line += f": {step.reason.removeprefix('auto: ')}"
    if step.note:
        line += f": {step.note}"
    return line
