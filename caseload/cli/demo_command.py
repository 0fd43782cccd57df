"""`caseload demo`: build the invented demo caseload and open it."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import click
import platformdirs

from caseload.application.demo import build_demo, clinic_timezone
from caseload.application.identity import os_account
from caseload.application.staff import local_today
from caseload.cli.global_options import GlobalOptions, pass_options
from caseload.cli.interface_command import open_interface
from caseload.cli.printing import list_table, print_table


def demo_store_path() -> Path:
    return Path(platformdirs.user_data_dir("caseload")) / "demo.db"


@click.command()
@click.option("--no-ui", is_flag=True, help="Build the demo store and print the caseload list only.")
@pass_options
def demo(options: GlobalOptions, no_ui: bool) -> None:
    """Build the invented demo caseload (dated relative to today) and open it."""
    path = Path(options.db_path) if options.db_path else demo_store_path()
    built = build_demo(path, options.date_of_record or local_today(clinic_timezone()), os_account())
    built.store.close()
    click.echo(f"Demo caseload of {built.clinic}: {built.patients} patients, {built.entries} entries, store {path}")
    click.echo(f"Your OS account is mapped to the admin {built.admin.id}; try any role with --as:")
    print_table(["staff", "name", "role"], [[s.id, s.name, s.role.value] for s in built.staff])
    on_demo = replace(options, db_path=str(path), clinic=None)
    if no_ui:
        list_table(on_demo.open_clinic().morning_list())
    else:
        open_interface(on_demo)


COMMANDS = [demo]
