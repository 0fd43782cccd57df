"""The scriptable interface: `caseload [--db PATH] [--as STAFF] [--today DATE] COMMAND`.

Exit codes: 0 done, 1 refused input or rule (one line on stderr, nothing written), 2 usage.

Commands load lazily: each lives in a module of this package listed in `COMMAND_MODULES`, imported
only when one of its commands runs (or for `--help`), so a command pays for the libraries it uses
(exporters, Textual, jinja2, xlsxwriter, fpdf) and no other's. This is the one start-up mechanism:
a module keeps its imports at the top, and a heavy library used by only some of a shared module's
functions is imported inside those functions.
"""

from __future__ import annotations

import importlib
import sys
from datetime import date

import click

from caseload.cli import interface_command
from caseload.cli.global_options import GlobalOptions, fail_cleanly

# Each command's name and the module (in this package) whose COMMANDS holds it.
COMMAND_MODULES = {
    "init": "store_commands", "backup": "store_commands", "restore": "store_commands", "check": "store_commands",
    "staff": "staff_commands",
    "patient": "patient_commands", "show": "patient_commands", "list": "patient_commands",
    "log": "entry_commands", "import": "entry_commands", "entries": "entry_commands", "amend": "entry_commands",
    "void": "entry_commands",
    "alerts": "alert_commands", "ack": "alert_commands", "snooze": "alert_commands", "resolve": "alert_commands",
    "protocol": "protocol_commands",
    "summary": "summary_commands",
    "pack": "referral_commands", "fhir": "referral_commands",
    "demo": "demo_command",
    "host": "host_commands",
}  # fmt: skip


class CaseloadGroup(click.Group):
    """The top-level group: refusals become one line, and each command's module loads when it is used."""

    def invoke(self, ctx: click.Context):
        with fail_cleanly():
            return super().invoke(ctx)

    def list_commands(self, ctx: click.Context) -> list[str]:
        return sorted(COMMAND_MODULES)

    def get_command(self, ctx: click.Context, name: str) -> click.Command | None:
        if name not in COMMAND_MODULES:
            return None
        module = importlib.import_module(f"{__name__}.{COMMAND_MODULES[name]}")
        return next(command for command in module.COMMANDS if command.name == name)


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


def run() -> None:
    sys.exit(main())
