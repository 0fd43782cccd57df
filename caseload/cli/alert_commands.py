"""Alert commands: the queue, the morning refresh, and handling an alert."""

from __future__ import annotations

import click
from rich.table import Table

from caseload.application.alert_handling import STATES
from caseload.application.clinic import Clinic
from caseload.cli.global_options import echo_json, pass_clinic
from caseload.cli.printing import console, safe
from caseload.core.alerts import ALERT_KINDS
from caseload.core.model import Alert
from caseload.presentation import json_shapes
from caseload.presentation.alert_evidence import evidence_sentences
from caseload.presentation.glossary import ALERT_CAUTION, TELL_THE_CALLER, alert_label, refresh_line
from caseload.presentation.safe_text import printable


def _handled(a: Alert) -> str:
    if a.handled_by is None:
        return ""
    text = f"{a.handled_by}: {a.resolved_reason or a.note or ''}".rstrip(": ")
    return text + (f" (until {a.snooze_until.isoformat()})" if a.snooze_until else "")


@click.command("alerts")
@click.option("--json", "as_json", is_flag=True, help="Machine-readable output (stable keys).")
@click.option("--state", type=click.Choice(STATES), default="open", show_default=True)
@click.option("--kind", type=click.Choice(ALERT_KINDS), help="Only alerts of this kind.")
@click.option("--nurse", metavar="STAFF", help="Only the patients of this nurse.")
@click.option("--refresh", is_flag=True, help="Bring every patient's alerts up to date first.")
@click.option("--why", is_flag=True, help="Each alert's evidence in sentences (for phone staff, the words for the "
              "caller), under the table.")
@pass_clinic
def alerts(clinic: Clinic, as_json: bool, state: str, kind: str | None, nurse: str | None, refresh: bool,
           why: bool) -> None:
    """The alert queue, most pressing first (severity, then clinical risk, then due day)."""
    if refresh:
        click.echo(refresh_line(clinic.refresh()), err=as_json)
    found = clinic.alerts(state, kind, nurse)
    if as_json:
        echo_json([json_shapes.alert(a) for a in found])
        return
    _alert_table(found, f"Alerts ({state}): {len(found)}")
    if why:
        for a in found:
            click.echo(f"\n{a.id} {a.patient_id} {a.kind}:")
            for line in _why(clinic, a):
                click.echo(f"  {printable(line)}")
    console().print(ALERT_CAUTION, style="dim")


def _why(clinic: Clinic, a: Alert) -> list[str]:
    """An alert's evidence in sentences; for the caller's view of it, the words to tell the caller."""
    if clinic.caller_view_only(a):
        return [f"{TELL_THE_CALLER} {a.message}"]
    return evidence_sentences(a.kind, a.evidence)


def _alert_table(found: list[Alert], title: str) -> None:
    """The identifying columns never wrap; the message and the handling wrap to the terminal."""
    table = Table(title=title, header_style="bold", box=None, pad_edge=False)
    for header in ("id", "patient", "severity", "kind", "alert", "state", "due"):
        table.add_column(header, no_wrap=True)
    table.add_column("message", ratio=3)
    table.add_column("handled", ratio=1)
    for a in found:
        table.add_row(*(safe(c) for c in (a.id, a.patient_id, a.severity.value, a.kind, alert_label(a.kind), a.state.value,
                                          a.due.isoformat(), a.message, _handled(a))))
    console().print(table)


def _done(a: Alert, what: str) -> None:
    until = f" until {a.snooze_until.isoformat()}" if a.snooze_until else ""
    click.echo(f"Alert {a.id} ({a.patient_id} {a.kind}) {what}{until} by {a.handled_by}.")


@click.command()
@click.argument("alert_id")
@click.option("--note", help="What was done (needed for clinical alerts).")
@pass_clinic
def ack(clinic: Clinic, alert_id: str, note: str | None) -> None:
    """Acknowledge an alert: you are on it."""
    _done(clinic.acknowledge(alert_id, note), "acknowledged")


@click.command()
@click.argument("alert_id")
@click.option("--until", "until", required=True, metavar="DATE", help="YYYY-MM-DD, tomorrow or +N (days ahead).")
@click.option("--note", help="Why it can wait (needed for clinical alerts).")
@pass_clinic
def snooze(clinic: Clinic, alert_id: str, until: str, note: str | None) -> None:
    """Put an alert off until a later day; it comes back as open that day."""
    _done(clinic.snooze(alert_id, until, note), "snoozed")


@click.command()
@click.argument("alert_id")
@click.option("--note", help="What was done (needed for clinical alerts).")
@pass_clinic
def resolve(clinic: Clinic, alert_id: str, note: str | None) -> None:
    """Resolve an alert; it is raised again for the same cycle or event only if the finding gets worse."""
    _done(clinic.resolve(alert_id, note), "resolved")


COMMANDS = [alerts, ack, snooze, resolve]
