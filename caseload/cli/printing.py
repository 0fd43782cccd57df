"""Plain-terminal rendering of lists and records for the CLI (rich tables, escaped user text)."""

from __future__ import annotations

from rich.console import Console
from rich.markup import escape
from rich.table import Table
from rich.text import Text

from caseload.core.model import Entry, Severity
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


# Severity in the caseload list: under NO_COLOR the colour goes and bold and reverse stay, so
# "urgent" and "today" still stand out from ordinary text.
SEVERITY_STYLES = {Severity.URGENT: "bold reverse red", Severity.TODAY: "bold yellow"}
LIST_GAP = 1  # blank columns between two columns
LIST_WIDE = 120  # plan and nurse from this many columns
LIST_WIDEST = 140  # the window and shift days from this many
LIST_SHRINKABLE = ("name", "phase", "alert")  # cut (with an ellipsis) when the terminal is narrow, alert first


def list_cells(line) -> dict[str, Text]:
    """One caseload line as the CLI list's cells, by column."""
    s, top = line.snapshot, line.top_alert
    alert = Text()
    if top is not None:
        alert.append(top.severity.value, style=SEVERITY_STYLES.get(top.severity, ""))
        alert.append(f" {alert_short(top.kind)} {more_alerts(len(line.alerts) - 1)}".rstrip())
    window = f"{short_day(s.fertile_window[0])}-{short_day(s.fertile_window[1])}" if s and s.fertile_window else ""
    return {
        "patient": Text(printable(line.patient.id)),
        "name": Text(printable(line.patient.name)),
        "day": Text("" if line.cycle_day is None else str(line.cycle_day)),
        "phase": Text(phase_short(s.phase) if s else ""),
        "window": Text(window),
        "shift": Text(short_day(s.shift_confirmed_on) if s and s.shift_confirmed_on else ""),
        "alert": alert,
        "next": Text(f"{next_event_short(s.next_event)} {short_day(s.next_event_day)}" if s and s.next_event else ""),
        "quiet": Text("" if line.days_since_entry is None else str(line.days_since_entry)),
        "plan": Text(line.patient.plan.value),
        "nurse": Text(printable(line.patient.nurse_id or "-")),
    }


def list_columns(width: int) -> list[str]:
    """The list's columns for a terminal `width` wide: cycle day and days quiet always."""
    columns = ["patient", "name", "day", "phase"]
    if width >= LIST_WIDEST:
        columns += ["window", "shift"]
    columns += ["alert", "next", "quiet"]
    if width >= LIST_WIDE:
        columns += ["plan", "nurse"]
    return columns


def list_widths(columns: list[str], rows: list[dict[str, Text]], width: int) -> dict[str, int]:
    """Each column as wide as its widest cell or heading; past the terminal's width the shrinkable
    ones give up room (alert first, then phase, then name), never below their heading."""
    widths = {c: max([len(c)] + [r[c].cell_len for r in rows]) for c in columns}
    excess = sum(widths.values()) + LIST_GAP * (len(columns) - 1) - width
    for column in reversed(LIST_SHRINKABLE):
        if excess <= 0:
            break
        give = min(excess, widths[column] - len(column))
        widths[column] -= give
        excess -= give
    return widths


def list_table(lines) -> None:
    """The caseload in triage order, fitted to the terminal: at 80 columns every column but plan,
    nurse, window and shift, with alerts, phases and names cut in that order when room runs out."""
    out = console()
    columns = list_columns(out.width)
    rows = [list_cells(line) for line in lines]
    widths = list_widths(columns, rows, out.width)
    table = Table(title=f"Caseload: {len(lines)} patients (day = cycle day, quiet = days since last entry)",
                  header_style="bold", box=None, pad_edge=False, padding=(0, LIST_GAP, 0, 0), collapse_padding=True)
    for c in columns:
        table.add_column(c, no_wrap=True, overflow="ellipsis", width=widths[c],
                         justify="right" if c in ("day", "quiet") else "left")
    for row in rows:
        table.add_row(*(row[c] for c in columns))
    out.print(table)
    out.print(CAUTION, style="dim")


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
