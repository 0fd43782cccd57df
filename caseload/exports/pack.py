"""The referral pack of one patient: what a doctor or an early-pregnancy unit needs, on paper.

`build` turns the record (patient, analysis, entries with their history, open alerts) into a
`Pack`: sections of sentences and tables, the charts of the last cycles as vector figures, the
entries of those cycles with every correction, and the caution. `html` renders it as one
self-contained page with print styles; `pack_pdf.render` draws the same Pack as a PDF.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from datetime import date

import jinja2
from markupsafe import Markup

from caseload.core.analysis import Analysis, CycleRecord
from caseload.core.figo import Classification
from caseload.core.model import Alert, Entry, Kind, observations
from caseload.core.pregnancy import hcg_trend
from caseload.core.settings import Protocol
from caseload.application.referral import PackInput
from caseload.exports import chart
from caseload.presentation.days import iso_day, iso_minute, iso_span
from caseload.presentation.glossary import (
    alert_label, edd_method_label, entry_history, evidence_key_label, kind_label, ovulation_method_label,
)
from caseload.presentation.safe_text import printable

CAUTION = (
    "Predictions in this pack are estimates from the patient's own records and published population figures; "
    "they are not contraception advice. Alerts point to records worth a clinician's look: they defer to the "
    "clinic's protocols and to licensed clinical judgement, and do not replace either."
)
UNITS = {Kind.HCG: "IU/L", Kind.LH: "IU/L"}


@dataclass(frozen=True)
class Row:
    cells: tuple[str, ...]
    struck: bool = False  # a replaced or voided entry: shown, with a line through it


@dataclass(frozen=True)
class Table:
    header: tuple[str, ...]
    rows: tuple[Row, ...]


@dataclass(frozen=True)
class Section:
    heading: str
    paragraphs: tuple[str, ...] = ()
    table: Table | None = None


@dataclass(frozen=True)
class ChartBlock:
    caption: str
    figure: chart.Figure


@dataclass(frozen=True)
class Pack:
    title: str
    who: tuple[tuple[str, str], ...]
    sections: tuple[Section, ...]  # page 1: why, cycles, pregnancy, follicles
    charts: tuple[ChartBlock, ...]
    entries: Section
    caution: str


def _num(value: float | None, digits: int = 1) -> str:
    return "-" if value is None else f"{value:.{digits}f}"


def who(i: PackInput) -> tuple[tuple[str, str], ...]:
    p, a = i.patient, i.analysis
    nurse = "-" if p.nurse_id is None else f"{printable(i.staff_names.get(p.nurse_id, p.nurse_id))} ({p.nurse_id})"
    cycle = "no cycle start recorded" if a.cycle_day is None else f"day {a.cycle_day} (from {iso_day(a.cycle_start)})"
    return (
        ("Patient", printable(p.name)),
        ("Date of birth", f"{iso_day(p.born)} (age {a.age_years})"),
        ("Patient id", p.id),
        ("Plan and status", f"{p.plan.value}, {p.status.value}"),
        ("Nurse", nurse),
        ("Clinic", printable(i.clinic)),
        ("Current cycle", cycle),
        ("Prepared", f"{iso_day(i.today)} by {printable(i.prepared_by)}"),
    )


def _evidence(evidence: Mapping) -> str:
    """An alert's evidence as words: 'key: value' pairs, nested ones in brackets."""
    parts = []
    for key, value in evidence.items():
        if isinstance(value, Mapping):
            value = "(" + _evidence(value) + ")"
        elif isinstance(value, (list, tuple)):
            value = " to ".join(str(v) for v in value)
        elif value is None:
            value = "none"
        parts.append(f"{evidence_key_label(key)}: {value}")
    return "; ".join(parts)


def why(alerts: Sequence[Alert]) -> Section:
    if not alerts:
        return Section("Why: open alerts", ("No alert is open for this patient.",))
    paragraphs = tuple(
        f"{alert_label(a.kind)} ({a.severity.value}, {a.state.value}, raised {iso_day(a.raised_on)}): {a.message} "
        f"Evidence: {_evidence(a.evidence)}. Rule: {a.rule}. Source: {a.source}."
        for a in alerts
    )
    return Section("Why: open alerts", paragraphs)


def _classification_lines(c: Classification, a: Analysis, protocol: Protocol) -> tuple[str, ...]:
    s = a.stats
    if s.count < protocol.min_cycles_classify:
        return (f"FIGO 2018: not classified: {s.count} complete cycles, {protocol.min_cycles_classify} needed.",)
    return (
        f"FIGO 2018 frequency: {c.frequency} (median cycle {_num(s.median)} days; normal "
        f"{protocol.figo_frequent_below} to {protocol.figo_infrequent_above}).",
        f"FIGO 2018 regularity: {c.regularity} (shortest {s.shortest}, longest {s.longest}: variation "
        f"{s.variation} days; normal up to {c.variation_limit} at age {c.age_years}).",
        f"FIGO 2018 duration: {c.duration} (median bleed {_num(s.bleed_median)} days; prolonged above "
        f"{protocol.figo_prolonged_bleed_above}).",
    )


def cycle_summary(i: PackInput) -> Section:
    a = i.analysis
    s = a.stats
    stats = (f"{s.count} complete cycles (the last {i.protocol.stats_cycles} at most): mean {_num(s.mean)} days, "
             f"SD {_num(s.sd)}, median {_num(s.median)}, shortest {s.shortest or '-'}, longest {s.longest or '-'}.")
    luteal = [f"{c.luteal_length} (cycle from {iso_day(c.start)})" for c in a.cycles if c.luteal_length is not None]
    luteal_line = "Luteal phases (days): " + ("; ".join(luteal) if luteal else "none measured") + "."
    lines = (stats, *_classification_lines(a.classification, a, i.protocol), luteal_line)
    pr = a.prediction
    if pr is not None:
        lines += (f"Current cycle (estimates): ovulation most likely {iso_day(pr.ovulation)}, 80% range "
                  f"{iso_span(pr.ovulation_range)}; fertile window {iso_span(pr.fertile_window)} (Wilcox 1995); "
                  f"next period about {iso_day(pr.next_period)} (90% range {iso_span(pr.next_period_range)}).",)
    rows = tuple(
        Row((str(n), iso_day(c.start), "open" if c.length is None else str(c.length), str(c.bleed_days),
             iso_day(c.markers.ovulation), ovulation_method_label(c.markers.ovulation_method),
             "-" if c.luteal_length is None else str(c.luteal_length)))
        for n, c in reversed(list(enumerate(a.cycles, start=1)))
    )
    table = Table(("#", "Start", "Length", "Bleed days", "Ovulation (est.)", "Dated by", "Luteal"), rows)
    return Section("Cycle summary", lines, table if rows else None)


def pregnancy(i: PackInput) -> Section | None:
    p = i.analysis.pregnancy
    if p is None:
        return None
    lines = [f"Last menstrual period {iso_day(p.lmp)}; first positive hCG {iso_day(p.positive_test)}.",
             f"Estimated delivery date {iso_day(p.edd)} ({edd_method_label(p.edd_method)}); "
             f"gestational age {p.gestational_age or '-'} today."]
    trend = p.hcg_trend
    if trend is not None:
        verdict = "below" if trend.below_minimum else "at or above"
        lines.append(f"Serum hCG rise per 48 h (log-linear fit of the last {i.protocol.hcg_fit_days} days): "
                     f"{trend.rise_48h:.0%}, {verdict} the protocol minimum of {i.protocol.hcg_min_rise_48h:.0%}.")
    rows = []
    for n, v in enumerate(p.hcg):
        rise = "-"
        if n > 0:
            pair = hcg_trend((p.hcg[n - 1], v), v.taken.date(), i.protocol)
            rise = "-" if pair is None else f"{pair.rise_48h:.0%}"
        rows.append(Row((iso_minute(v.taken), f"{v.iu_l:g}", rise)))
    table = Table(("Serum hCG taken", "IU/L", "Rise per 48 h since the previous"), tuple(rows)) if rows else None
    return Section("Pregnancy", tuple(lines), table)


def follicles(i: PackInput) -> Section | None:
    f = i.analysis.follicles
    if f is None:
        return None
    trigger = "reached" if f.trigger_reached else "projected"
    lines = (f"Lead follicle {_num(f.lead_mm)} mm; {f.mature_count} at or above {i.protocol.mature_follicle_mm:g} mm; "
             f"growth {_num(f.growth_mm_per_day)} mm a day; trigger size {i.protocol.trigger_follicle_mm:g} mm "
             f"{trigger} {iso_day(f.trigger_day)}.",)
    rows = tuple(Row((iso_day(s.day), _num(s.lead_mm), str(s.mature_count), _num(s.endometrium_mm)))
                 for s in f.scans)
    return Section("Follicle tracking (this cycle)", lines,
                   Table(("Scan", "Lead mm", "Mature", "Endometrium mm"), rows))


def charted_cycles(a: Analysis, count: int) -> tuple[tuple[int, CycleRecord], ...]:
    numbered = list(enumerate(a.cycles, start=1))
    return tuple(numbered[-count:])


def charts(i: PackInput, shown: Sequence[tuple[int, CycleRecord]]) -> tuple[ChartBlock, ...]:
    obs = [o for o in observations(list(i.entries)) if o.day <= i.today]
    pr = i.analysis.prediction
    blocks = []
    for number, rec in shown:
        last = rec.end or i.today
        group = tuple(o for o in obs if rec.start <= o.day <= last)
        daily = {d.day: d.p_fertile for d in pr.daily} if rec.is_open and pr is not None else {}
        figure = chart.cycle_figure(chart.CycleInput(number, rec, group, last, daily))
        blocks.append(ChartBlock(f"Cycle {number} from {iso_day(rec.start)}", figure))
    return tuple(blocks)


def _value(e: Entry) -> str:
    if e.kind == Kind.TEMP and e.value.number is not None:
        return f"{e.value.number:.2f} °C"  # readings are kept to 2 decimals; print them so
    unit = UNITS.get(e.kind) if e.value.number is not None else None
    return e.value.display() + (f" {unit}" if unit else "")


def entries_section(i: PackInput, since: date | None) -> Section:
    chosen = sorted((e for e in i.entries if since is None or e.day >= since), key=lambda e: (e.day, e.time or "", e.id))
    rows = tuple(
        Row((str(e.id), iso_day(e.day), e.time or "", kind_label(e.kind), printable(_value(e)), ", ".join(e.flags),
             printable(e.note), printable(i.staff_names.get(e.by, e.by)), printable(entry_history(e))),
            struck=not e.current)
        for e in chosen
    )
    heading = "Entries of the charted cycles" if since is not None else "Entries"
    paragraphs = ("Struck-through rows were corrected or voided; the reason is beside them.",) if rows else (
        "No entries.",)
    table = Table(("#", "Day", "Time", "Kind", "Value", "Flags", "Note", "Logged by", "History"), rows)
    return Section(heading, paragraphs, table)


def build(i: PackInput) -> Pack:
    """The pack's content, the same for the HTML and the PDF."""
    shown = charted_cycles(i.analysis, i.cycles)
    sections = [why(i.alerts), cycle_summary(i)]
    sections += [s for s in (pregnancy(i), follicles(i)) if s is not None]
    since = shown[0][1].start if shown else None
    return Pack(
        title=f"Referral pack: {printable(i.patient.name)}",
        who=who(i),
        sections=tuple(sections),
        charts=charts(i, shown),
        entries=entries_section(i, since),
        caution=CAUTION,
    )


_environment = jinja2.Environment(
    loader=jinja2.PackageLoader("caseload.exports", "templates"), autoescape=True, trim_blocks=True,
    lstrip_blocks=True, undefined=jinja2.StrictUndefined,
)


def html(pack: Pack) -> str:
    """The pack as one self-contained HTML page (inline SVG charts, no remote fonts or scripts)."""
    figures = [Markup(chart.svg(b.figure, b.caption)) for b in pack.charts]
    return _environment.get_template("pack.html.j2").render(pack=pack, figures=figures)
