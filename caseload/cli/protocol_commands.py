"""`caseload protocol ...`: the clinic protocol, every threshold the alert rules use."""

from __future__ import annotations

import click

from caseload.application.clinic import Clinic
from caseload.application.protocol import check_protocol_file
from caseload.cli.global_options import pass_clinic
from caseload.cli.printing import console, print_table, safe
from caseload.core.protocol_file import LAYOUT, overrides_of, setting_rows, value_text
from caseload.presentation.glossary import refresh_line
from caseload.presentation.safe_text import printable


TEXT_COLUMN = 4  # as narrow as the column headings: the words are printed in full below


@click.group("protocol")
def protocol_group() -> None:
    """The clinic protocol: every threshold the alert rules use."""


@protocol_group.command("show")
@pass_clinic
def protocol_show(clinic: Clinic) -> None:
    """The version in force: every setting, with its default, accepted range and source."""
    in_use = clinic.protocol_show()
    out = console()
    out.print(f"Protocol version {in_use.version}, set by {safe(in_use.set_by)} at {safe(in_use.set_at)} "
              f"({safe(in_use.source)}): {len(in_use.overrides())} settings differ from the defaults.")  # fmt: skip
    rows = [
        [r.name, value_text(r.value, TEXT_COLUMN) + (" *" if r.overridden else ""), value_text(r.default, TEXT_COLUMN),
         r.accepted, r.source, r.doc]
        for r in setting_rows(in_use.protocol)
    ]
    print_table(["setting", "in use", "default", "accepted", "source", "meaning"], rows)
    for r in setting_rows(in_use.protocol):
        if isinstance(r.value, str):  # words are cut in the table: in full below it
            out.print(f"{r.name} in use: {value_text(r.value)}", markup=False)
    out.print(f"* set by the clinic. Files for 'protocol use': {LAYOUT}; unknown names are refused.", style="dim")


@protocol_group.command("check")
@click.argument("file")  # checked when read: click's check would look at the path as the service account
def protocol_check(file: str) -> None:
    """Check a protocol file without using it."""
    changed = overrides_of(check_protocol_file(file))
    listed = ", ".join(f"{k} = {value_text(v)}" for k, v in changed.items()) or "none: every setting at its default"
    click.echo(f"{printable(file)}: valid; overrides {listed}.")


@protocol_group.command("use")
@click.argument("file")  # checked when read: click's check would look at the path as the service account
@pass_clinic
def protocol_use(clinic: Clinic, file: str) -> None:
    """Store a checked file's settings as the next protocol version (admins), then refresh every patient's alerts."""
    in_use, done = clinic.protocol_use(file)
    click.echo(f"Protocol version {in_use.version} in use ({len(in_use.overrides())} settings differ from the defaults).")
    click.echo(refresh_line(done))


@protocol_group.command("export")
@click.argument("file", type=click.Path(dir_okay=False))
@pass_clinic
def protocol_export(clinic: Clinic, file: str) -> None:
    """Write the protocol in force to a new file, in the layout 'protocol use' reads."""
    in_use = clinic.protocol_export(file)
    click.echo(f"Protocol version {in_use.version} written to {printable(file)}.")


COMMANDS = [protocol_group]
