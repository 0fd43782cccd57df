"""Plain-terminal rendering of lists and records for the CLI (rich tables, escaped user text)."""

from __future__ import annotations

from rich.console import Console
from rich.markup import escape
from rich.table import Table

from caseload.core.model import Entry
from caseload.presentation.days import iso_day, short_day
from caseload.presentation.glossary import (CAUTION, alert_label, alert_short, entry_history, more_alerts,
                                            next_event_short, phase_label, phase_short)
from caseload.presentation.safe_text import printable


def console() -> Console:
    out = Console(highlight=False, soft_wrap=False)
    if not out.is_terminal:
        out.width = max(out.width, 160)  # piped output is for files and scripts: do not truncate
    return out


def safe(text: object) -> str:
    """User text as inert, single-line markup: no rich tags, no terminal escapes."""
    return escape(printable(text))


def print_table(headers: list[str], rows: list[list[object]], title: str | None = None) -> None:
    table = Table(title=title, header_style="bold", box=None, pad_edge=False)
    for h in headers:
        table.add_column(h, no_wrap=True, overflow="ellipsis", min_width=len(h))
    for row in rows:
        table.add_row(*(safe(c) for c in row))
    console().print(table)


def entries_table(entries: list[Entry]) -> None:
    rows = [
        [e.id, e.day.isoformat(), e.time or "", e.kind.value, e.value.display(), ",".join(e.flags), e.by, entry_history(e), e.note]
        for e in entries
    ]
    print_table(["id", "day", "time", "kind", "value", "flags", "by", "correction", "note"], rows)


def list_table(lines) -> None:
    """The caseload in triage order, narrow enough for an 80-column terminal."""
    rows = []
    for line in lines:
        s, top = line.snapshot, line.top_alert
        alert = "" if top is None else f"{top.severity.value} {alert_short(top.kind)} {more_alerts(len(line.alerts) - 1)}".rstrip()
        window = f"{short_day(s.fertile_window[0])}-{short_day(s.fertile_window[1])}" if s and s.fertile_window else ""
        shift = short_day(s.shift_confirmed_on) if s and s.shift_confirmed_on else ""
        nxt = f"{next_event_short(s.next_event)} {short_day(s.next_event_day)}" if s and s.next_event else ""
        since = "" if line.days_since_entry is None else str(line.days_since_entry)
        rows.append([line.patient.id, line.patient.name, line.cycle_day or "", phase_short(s.phase) if s else "", window, shift, alert, nxt, since])
    print_table(["patient", "name", "day", "phase", "window", "shift", "alert", "next", "quiet"], rows,
                title=f"Caseload: {len(lines)} patients (day = cycle day, quiet = days since last entry)")
    console().print(CAUTION, style="dim")


def record_text(record) -> None:
    """One patient's record, readable in a plain terminal."""
    a, p = record.analysis, record.patient
    out = console()
    out.print(f"[bold]{safe(p.id)} {safe(p.name)}[/] born {p.born.isoformat()} | plan {p.plan.value} | "
              f"status {p.status.value} | nurse {safe(p.nurse_id or '-')}")
    out.print(f"Cycle day {a.cycle_day or '-'} (started {iso_day(a.cycle_start)}), phase {phase_label(a.phase)}")
    c, s = a.classification, a.stats
    out.print(f"FIGO 2018: frequency {c.frequency}, regularity {c.regularity}, duration {c.duration}; "
              f"{s.count} complete cycles, mean {s.mean or '-'}, shortest {s.shortest or '-'}, longest {s.longest or '-'}")
    print_table(["start", "length", "bleed", "ovulation", "method", "luteal"],
                [[r.start.isoformat(), r.length or "open", r.bleed_days, iso_day(r.markers.ovulation),
                  r.markers.ovulation_method or "-", r.luteal_length or "-"] for r in a.cycles], title="Cycles")
    if a.prediction:
        pr = a.prediction
        rng = f"{iso_day(pr.ovulation_range[0])}..{iso_day(pr.ovulation_range[1])}" if pr.ovulation_range else "-"
        win = f"{iso_day(pr.fertile_window[0])}..{iso_day(pr.fertile_window[1])}" if pr.fertile_window else "-"
        cal = f"days {pr.calendar_rule[0]}-{pr.calendar_rule[1]}" if pr.calendar_rule else "needs 6 cycles"
        out.print(f"Predicted ovulation {iso_day(pr.ovulation)} (80% {rng}); fertile window {win}; "
                  f"next period {iso_day(pr.next_period)} (90% {iso_day(pr.next_period_range[0])}..{iso_day(pr.next_period_range[1])}); "
                  f"calendar rule {cal}")
    if a.current:
        sh = a.current.shift
        out.print(f"Thermal shift: {'confirmed ' + iso_day(sh.confirmed_on) if sh.confirmed else 'not confirmed'}; "
                  f"coverline {sh.coverline or '-'}; change point {sh.agreement}")
    if a.pregnancy:
        pg = a.pregnancy
        out.print(f"Pregnancy: EDD {iso_day(pg.edd)} ({pg.edd_method}), gestational age {pg.gestational_age or '-'}")
    for al in record.alerts:
        out.print(f"[bold]{al.severity.value}[/] {alert_label(al.kind)} ({al.state.value}): {safe(al.message)}")
    out.print(CAUTION, style="dim")
