"""Alert commands: the queue, the morning refresh, handling an alert, and the clinic protocol."""

from __future__ import annotations

import click
from rich.table import Table

from caseload.cli.session import Session, echo_json, pass_session
from caseload.cli.text_views import console, print_table, safe
from caseload.core.alerts import ALERT_KINDS, CAUTION
from caseload.core.model import Alert
from caseload.core.protocol_file import LAYOUT, setting_rows
from caseload.application import alert_handling as alert_service
from caseload.application import protocol as protocol_service
from caseload.application.recompute import RefreshReport, refresh_all


def alert_json(a: Alert) -> dict:
    return {
        "id": a.id,
        "patient": a.patient_id,
        "kind": a.kind,
        "severity": a.severity.value,
        "state": a.state.value,
        "raised_on": a.raised_on.isoformat(),
        "due": a.due.isoformat(),
        "message": a.message,
        "evidence": a.evidence,
        "rule": a.rule,
        "source": a.source,
        "clinical": alert_service.is_clinical(a.kind),
        "handled_by": a.handled_by,
        "handled_at": a.handled_at.isoformat() if a.handled_at else None,
        "note": a.note,
        "snooze_until": a.snooze_until.isoformat() if a.snooze_until else None,
        "resolved_reason": a.resolved_reason,
        "key": a.key,
        "caution": CAUTION,
    }


def _refreshed(done: RefreshReport) -> str:
    return f"Refreshed {done.patients} patients: {done.raised} alerts raised or escalated, {done.resolved} auto-resolved."


def _handled(a: Alert) -> str:
    if a.handled_by is None:
        return ""
    text = f"{a.handled_by}: {a.resolved_reason or a.note or ''}".rstrip(": ")
    return text + (f" (until {a.snooze_until.isoformat()})" if a.snooze_until else "")


@click.command("alerts")
@click.option("--json", "as_json", is_flag=True, help="Machine-readable output (stable keys).")
@click.option("--state", type=click.Choice(alert_service.STATES), default="open", show_default=True)
@click.option("--kind", type=click.Choice(ALERT_KINDS), help="Only alerts of this kind.")
@click.option("--nurse", metavar="STAFF", help="Only the patients of this nurse.")
@click.option("--refresh", is_flag=True, help="Bring every patient's alerts up to date first.")
@pass_session
def alerts(session: Session, as_json: bool, state: str, kind: str | None, nurse: str | None, refresh: bool) -> None:
    """The alert queue, most pressing first (severity, then due day)."""
    ctx = session.context()
    in_use = protocol_service.protocol_in_use(ctx.store)
    if in_use.error:
        click.echo(f"caseload: warning: {in_use.error}; the default protocol is in use", err=True)
    if refresh:
        done = refresh_all(ctx)
        click.echo(_refreshed(done), err=as_json)
    found = alert_service.list_alerts(ctx, state, kind, nurse)
    if as_json:
        echo_json([alert_json(a) for a in found])
        return
    _alert_table(found, f"Alerts ({state}): {len(found)}")
    console().print(CAUTION, style="dim")


def _alert_table(found: list[Alert], title: str) -> None:
    """The identifying columns never wrap; the message and the handling wrap to the terminal."""
    table = Table(title=title, header_style="bold", box=None, pad_edge=False)
    for header in ("id", "patient", "severity", "kind", "state", "due"):
        table.add_column(header, no_wrap=True)
    table.add_column("message", ratio=3)
    table.add_column("handled", ratio=1)
    for a in found:
        table.add_row(*(safe(c) for c in (a.id, a.patient_id, a.severity.value, a.kind, a.state.value,
                                          a.due.isoformat(), a.message, _handled(a))))
    console().print(table)


def _done(a: Alert, what: str) -> None:
    until = f" until {a.snooze_until.isoformat()}" if a.snooze_until else ""
    click.echo(f"Alert {a.id} ({a.patient_id} {a.kind}) {what}{until} by {a.handled_by}.")


@click.command()
@click.argument("alert_id")
@click.option("--note", help="What was done (needed for clinical alerts).")
@pass_session
def ack(session: Session, alert_id: str, note: str | None) -> None:
    """Acknowledge an alert: you are on it."""
    _done(alert_service.acknowledge(session.context(), alert_id, note), "acknowledged")


@click.command()
@click.argument("alert_id")
@click.option("--until", "until", required=True, metavar="DATE", help="YYYY-MM-DD, tomorrow or +N (days ahead).")
@click.option("--note", help="Why it can wait (needed for clinical alerts).")
@pass_session
def snooze(session: Session, alert_id: str, until: str, note: str | None) -> None:
    """Put an alert off until a later day; it comes back as open that day."""
    _done(alert_service.snooze(session.context(), alert_id, until, note), "snoozed")


@click.command()
@click.argument("alert_id")
@click.option("--note", help="What was done (needed for clinical alerts).")
@pass_session
def resolve(session: Session, alert_id: str, note: str | None) -> None:
    """Resolve an alert; it is never raised again for the same cycle or event."""
    _done(alert_service.resolve(session.context(), alert_id, note), "resolved")


@click.group("protocol")
def protocol_group() -> None:
    """The clinic protocol: every threshold the alert rules use."""


@protocol_group.command("show")
@pass_session
def protocol_show(session: Session) -> None:
    """Every setting in use, with its default, accepted range and source."""
    in_use = protocol_service.show_protocol(session.context())
    out = console()
    if in_use.path is None:
        out.print("Protocol file: none; the defaults are in use.")
    elif in_use.error:
        out.print(f"Protocol file: {safe(in_use.path)} [bold]REFUSED[/]: {safe(in_use.error)}")
        out.print("The defaults are in use until the file is fixed.")
    else:
        out.print(f"Protocol file: {safe(in_use.path)} ({len(in_use.overrides())} settings differ from the defaults).")
    rows = [
        [r.name, f"{r.value:g}" + (" *" if r.overridden else ""), f"{r.default:g}", f"{r.lo:g}-{r.hi:g}", r.source, r.doc]
        for r in setting_rows(in_use.protocol)
    ]
    print_table(["setting", "in use", "default", "accepted", "source", "meaning"], rows)
    out.print(f"* set by the clinic's file. TOML layout: {LAYOUT}; unknown names are refused.", style="dim")


@protocol_group.command("check")
@click.argument("file", type=click.Path(dir_okay=False))
def protocol_check(file: str) -> None:
    """Check a protocol file without using it."""
    checked = protocol_service.check_protocol_file(file)
    changed = checked.overrides()
    listed = ", ".join(f"{k} = {v:g}" for k, v in changed.items()) or "none: every setting at its default"
    click.echo(f"{file}: valid; overrides {listed}.")


@protocol_group.command("use")
@click.argument("file", type=click.Path(dir_okay=False))
@pass_session
def protocol_use(session: Session, file: str) -> None:
    """Make a checked file the store's protocol (admins), then refresh every patient's alerts under it."""
    in_use, done = protocol_service.use_protocol(session.context(), file)
    click.echo(f"Protocol file {in_use.path} in use ({len(in_use.overrides())} settings differ from the defaults).")
    click.echo(_refreshed(done))


COMMANDS = [alerts, ack, snooze, resolve, protocol_group]
