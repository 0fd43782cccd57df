"""The scriptable interface: `caseload [--db PATH] [--as STAFF] [--today DATE] COMMAND`.

Exit codes: 0 done, 1 refused input or rule (one line on stderr, nothing written), 2 usage.
"""

from __future__ import annotations

import sys

import click

from caseload.cli.session import Session, fail_cleanly
from caseload.cli import store_commands as admin
from caseload.cli import alert_commands as alerts
from caseload.cli import demo_command as demo
from caseload.cli import record_commands as records
from caseload.cli import referral_commands as referral
from caseload.cli import summary_command as reports
from caseload.cli import interface_command as tui


class CaseloadGroup(click.Group):
    def invoke(self, ctx: click.Context):
        with fail_cleanly():
            return super().invoke(ctx)


@click.group(cls=CaseloadGroup, invoke_without_command=True, context_settings={"help_option_names": ["-h", "--help"]})
@click.option("--db", "db_path", envvar="CASELOAD_DB", type=click.Path(dir_okay=False), help="Store file (default: CASELOAD_DB, else the user data folder).")
@click.option("--as", "as_staff", metavar="STAFF", help="Act as this staff member (honoured only for an admin's OS account).")
@click.option("--today", "today", envvar="CASELOAD_TODAY", metavar="YYYY-MM-DD", help="Review the caseload as of this day (default: the clinic's local date).")
@click.version_option(package_name="caseload")
@click.pass_context
def main(ctx: click.Context, db_path: str | None, as_staff: str | None, today: str | None) -> None:
    """Caseload of a fertility service: log call-ins, triage the morning list, export weekly summaries.

    With no command, opens the interface on the store. Predictions are estimates, not contraception
    advice; every alert defers to the clinic's protocols and licensed clinical judgement.
    """
    ctx.obj = Session(db_path, as_staff, today)
    if ctx.invoked_subcommand is None:
        tui.open_interface(ctx.obj)


for module in (records, alerts, admin, reports, referral, demo):
    for command in module.COMMANDS:
        main.add_command(command)


def run() -> None:
    sys.exit(main())
