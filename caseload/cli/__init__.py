"""The scriptable interface: `caseload [--db PATH] [--as STAFF] [--today DATE] COMMAND`.

Exit codes: 0 done, 1 refused input or rule (one line on stderr, nothing written), 2 usage.
"""

from __future__ import annotations

import sys
from datetime import date

import click

from caseload.cli import alert_commands, demo_command, entry_commands, host_commands, interface_command
from caseload.cli import patient_commands, protocol_commands, referral_commands, staff_commands, store_commands
from caseload.cli import summary_commands
from caseload.cli.global_options import GlobalOptions, fail_cleanly


class CaseloadGroup(click.Group):
    def invoke(self, ctx: click.Context):
        with fail_cleanly():
            return super().invoke(ctx)


@click.group(cls=CaseloadGroup, invoke_without_command=True, context_settings={"help_option_names": ["-h", "--help"]})
@click.option("--db", "db_path", envvar="CASELOAD_DB", type=click.Path(dir_okay=False), help="Store file (default: CASELOAD_DB, else the user data folder).")
@click.option("--as", "as_staff", metavar="STAFF", help="Act as this staff member (honoured only for an admin's OS account).")
@click.option("--today", "today", envvar="CASELOAD_TODAY", metavar="YYYY-MM-DD", help="View the caseload as of this day, read-only (default: the clinic's date of record).")
@click.option("--maintenance-date", "maintenance", metavar="YYYY-MM-DD", help="Admins only: make changes as of this day instead of the real date; every change says so in the audit trail.")
@click.version_option(package_name="caseload")
@click.pass_context
def main(ctx: click.Context, db_path: str | None, as_staff: str | None, today: str | None, maintenance: str | None) -> None:
    """Caseload of a fertility service: log call-ins, triage the morning list, export weekly summaries.

    With no command, opens the interface on the store. Predictions are estimates, not contraception
    advice; every alert defers to the clinic's protocols and licensed clinical judgement.
    """
    fixed = ctx.obj if isinstance(ctx.obj, date) else None  # the real date, from tests only
    ctx.obj = GlobalOptions(db_path, as_staff, today, maintenance, fixed)
    if ctx.invoked_subcommand is None:
        interface_command.require_terminal()
        interface_command.open_interface(ctx.obj)


for module in (store_commands, staff_commands, patient_commands, entry_commands, alert_commands, protocol_commands,
               summary_commands, referral_commands, demo_command, host_commands):
    for command in module.COMMANDS:
        main.add_command(command)


def run() -> None:
    sys.exit(main())
