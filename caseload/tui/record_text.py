"""The words of a patient's record: the title line, the cycle history rows, the outlook panel."""

from __future__ import annotations


from rich.text import Text

from caseload.core.analysis import Analysis
from caseload.core.cycles import cycle_day
from caseload.application.caseload_view import PatientRecord
from caseload.presentation.glossary import (CAUTION, NEXT_EVENT_LABELS, ovulation_evidence_words,
                                            ovulation_method_label, phase_label)
from caseload.presentation.days import day_span, short_day
from caseload.presentation.safe_text import literal


def title_text(record: PatientRecord) -> Text:
    p, a = record.patient, record.analysis
    text = Text(p.id + " ", style="bold").append_text(literal(p.name, style="bold"))
    if a.cycle_day is not None:
        text.append(f"  cycle day {a.cycle_day}", style="bold")
        text.append(f" (from {short_day(a.cycle_start)}) · {phase_label(a.phase)}")
    else:
        text.append(f"  {phase_label(a.phase)}")
    status = "" if p.status.value == "active" else f" · {p.status.value}"
    text.append(f"  │ {a.age_years} y · {p.plan.value}{status} · nurse ", style="dim")
    text.append_text(literal(p.nurse_id or "-", style="dim"))
    return text


def cycle_rows(a: Analysis) -> list[list[str]]:
    """Newest first: #, start, length, bleed days, ovulation (cycle day and date), method, luteal length."""
    rows = []
    for number, c in reversed(list(enumerate(a.cycles, start=1))):
        ov = c.markers.ovulation
        ov_text = "-" if ov is None else f"day {cycle_day(c.start, ov)} ({short_day(ov)})"
        rows.append([
            str(number),
            short_day(c.start),
            "open" if c.length is None else str(c.length),
            str(c.bleed_days),
            ov_text,
            ovulation_method_label(c.markers.ovulation_method),
            "-" if c.luteal_length is None else str(c.luteal_length),
        ])
    return rows


def _num(value: float | None, digits: int = 1) -> str:
    return "-" if value is None else f"{value:.{digits}f}"


def classification_text(a: Analysis) -> Text:
    s, c = a.stats, a.classification
    text = Text("FIGO 2018 classification: ", style="bold")
    text.append(f"frequency {c.frequency} · regularity {c.regularity} · duration {c.duration}")
    text.append(f"  (age {c.age_years}; normal variation up to {c.variation_limit} days)\n", style="dim")
    text.append(f"{s.count} complete cycles: mean {_num(s.mean)} · SD {_num(s.sd)} · median {_num(s.median)} · "
                f"shortest {s.shortest or '-'} · longest {s.longest or '-'} · variation {s.variation if s.variation is not None else '-'} days")
    return text


def _outlook_prediction(a: Analysis, text: Text) -> None:
    pr = a.prediction
    if pr is None:
        text.append("No prediction: " + ("pregnancy is recorded.\n" if a.pregnancy else "no cycle start yet.\n"))
        return
    text.append("Ovulation most likely ", style="bold")
    text.append(f"{short_day(pr.ovulation)} (80% range {day_span(pr.ovulation_range)}); from the pattern alone "
                f"{short_day(pr.expected_ovulation)} ({day_span(pr.expected_ovulation_range)}); "
                f"this cycle's evidence: {ovulation_evidence_words(pr.evidence)}\n")
    text.append("Fertile window ", style="bold")
    text.append(f"{day_span(pr.fertile_window)} (six days ending on ovulation, Wilcox 1995)\n")
    text.append("Next period ", style="bold")
    text.append(f"{short_day(pr.next_period)} (90% range {day_span(pr.next_period_range)})\n")
    text.append("Calendar rule (Ogino-Knaus) ", style="bold")
    if pr.calendar_rule is None:
        text.append(f"needs 6 cycles (has {a.stats.count})\n")
    else:
        text.append(f"fertile from cycle day {pr.calendar_rule[0]} to {pr.calendar_rule[1]}\n")
    chances = " ".join(f"{short_day(d.day)} {d.p_fertile:.0%}" for d in pr.daily[:7])
    text.append("P(fertile) ", style="bold")
    text.append(f"{chances}\n")


def patient_line(record: PatientRecord) -> Text:
    p = record.patient
    text = Text("Patient ", style="bold").append_text(literal(f"{p.id} {p.name}"))
    text.append(f", born {p.born.isoformat()} ({record.analysis.age_years} y), plan {p.plan.value}, {p.status.value}, nurse ")
    return text.append_text(literal(p.nurse_id or "-")).append("\n")


def outlook_text(record: PatientRecord) -> Text:
    a = record.analysis
    text = patient_line(record)
    if a.next_event is not None:
        text.append("Next: ", style="bold")
        text.append(f"{NEXT_EVENT_LABELS.get(a.next_event.label, a.next_event.label)} {short_day(a.next_event.day)}\n")
    _outlook_prediction(a, text)
    if a.current is not None:
        sh = a.current.shift
        text.append("Thermal shift ", style="bold")
        state = f"confirmed {short_day(sh.confirmed_on)}" if sh.confirmed else "not confirmed"
        coverline = "no coverline yet" if sh.coverline is None else f"coverline {sh.coverline:.2f} °C"
        text.append(f"{state}; {coverline}; three-over-six and change point: {sh.agreement}; "
                    f"{sh.readings} readings\n")
    if a.pregnancy is not None:
        pg = a.pregnancy
        text.append("Pregnancy ", style="bold")
        rise = pg.hcg_trend.rise_48h if pg.hcg_trend else None
        text.append(f"EDD {short_day(pg.edd)} ({pg.edd_method or '-'}), gestational age {pg.gestational_age or '-'}, "
                    f"hCG rise per 48 h {'-' if rise is None else f'{rise:.0%}'}\n")
    if a.follicles is not None:
        f = a.follicles
        text.append("Follicles ", style="bold")
        text.append(f"lead {_num(f.lead_mm)} mm, {f.mature_count} mature, growth {_num(f.growth_mm_per_day)} mm/day, "
                    f"trigger size {short_day(f.trigger_day)}\n")
    text.append(CAUTION, style="italic")
    return text
