"""`caseload demo`: build the invented demo caseload and open it."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import click
import platformdirs

from caseload.application.demo import build_demo, clinic_timezone, is_demo_store
from caseload.application.identity import os_account
from caseload.application.staff import local_today
from caseload.cli.global_options import GlobalOptions, pass_options
from caseload.cli.interface_command import open_interface, require_terminal
from caseload.cli.printing import list_table, print_table


def demo_store_path() -> Path:
    return Path(platformdirs.user_data_dir("caseload")) / "demo.db"


@click.command()
@click.option("--no-ui", is_flag=True, help="Print the caseload list only, without the interface.")
@click.option("--fresh", is_flag=True, help="Rebuild the demo dated from today; what was done in it is discarded.")
@pass_options
def demo(options: GlobalOptions, no_ui: bool, fresh: bool) -> None:
    """Open the invented demo caseload as it was left, building it (dated relative to today) the first time."""
    if not no_ui:
        require_terminal()
    path = Path(options.db_path) if options.db_path else demo_store_path()
    if is_demo_store(path) and not fresh:
        done = f"Opening the demo as you left it ({path}); 'caseload demo --fresh' rebuilds it dated from today."
        click.echo(done)
    else:
        done = _build(path, options, rebuilt=fresh and path.exists())
    on_demo = replace(options, db_path=str(path), clinic=None)
    if no_ui:
        list_table(on_demo.open_clinic().morning_list())
    else:
        open_interface(on_demo, notice=done)


def _build(path: Path, options: GlobalOptions, rebuilt: bool) -> str:
    """Build the demo and print what was built; returns the line that says so."""
    built = build_demo(path, options.date_of_record or local_today(clinic_timezone()), os_account())
    built.store.close()
    what = "Rebuilt the demo caseload from the start" if rebuilt else "Built the demo caseload"
    done = f"{what} of {built.clinic}: {built.patients} patients, {built.entries} entries, store {path}"
    click.echo(done)
    click.echo(f"Your OS account is mapped to the admin {built.admin.id}; try any role with --as:")
    print_table(["staff", "name", "role"], [[s.id, s.name, s.role.value] for s in built.staff])
    return done


COMMANDS = [demo]
