"""`caseload protocol ...`: the clinic protocol, every threshold the alert rules use."""

from __future__ import annotations

import click

from caseload.application.clinic import Clinic
from caseload.application.protocol import check_protocol_file
from caseload.cli.global_options import pass_clinic
from caseload.cli.printing import console, print_table, safe
from caseload.core.protocol_file import LAYOUT, setting_rows
from caseload.presentation.glossary import refresh_line


@click.group("protocol")
def protocol_group() -> None:
    """The clinic protocol: every threshold the alert rules use."""


@protocol_group.command("show")
@pass_clinic
def protocol_show(clinic: Clinic) -> None:
    """Every setting in use, with its default, accepted range and source."""
    in_use = clinic.protocol_show()
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
    checked = check_protocol_file(file)
    changed = checked.overrides()
    listed = ", ".join(f"{k} = {v:g}" for k, v in changed.items()) or "none: every setting at its default"
    click.echo(f"{file}: valid; overrides {listed}.")


@protocol_group.command("use")
@click.argument("file", type=click.Path(dir_okay=False))
@pass_clinic
def protocol_use(clinic: Clinic, file: str) -> None:
    """Make a checked file the store's protocol (admins), then refresh every patient's alerts under it."""
    in_use, done = clinic.protocol_use(file)
    click.echo(f"Protocol file {in_use.path} in use ({len(in_use.overrides())} settings differ from the defaults).")
    click.echo(refresh_line(done))


COMMANDS = [protocol_group]
