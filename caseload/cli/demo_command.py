"""`caseload demo`: build the invented demo caseload and open it."""

from __future__ import annotations

from datetime import date
from pathlib import Path

import click
import platformdirs

import pendulum

from caseload.cli.session import Session, pass_session
from caseload.cli.interface_command import open_interface
from caseload.cli.text_views import list_table, print_table
from caseload.application import caseload_view as caseload_service
from caseload.application.demo import build_demo, clinic_timezone
from caseload.application.identity import os_account


def demo_store_path() -> Path:
    return Path(platformdirs.user_data_dir("caseload")) / "demo.db"


@click.command()
@click.option("--no-ui", is_flag=True, help="Build the demo store and print the caseload list only.")
@pass_session
def demo(session: Session, no_ui: bool) -> None:
    """Build the invented demo caseload (dated relative to today) and open it."""
    path = Path(session.db_path) if session.db_path else demo_store_path()
    if session.today_text:
        today = date.fromisoformat(session.today_text)
    else:
        local = pendulum.now(clinic_timezone())
        today = date(local.year, local.month, local.day)
    built = build_demo(path, today, os_account())
    built.store.close()
    click.echo(f"Demo caseload of {built.clinic}: {built.patients} patients, {built.entries} entries, store {path}")
    click.echo(f"Your OS account is mapped to the admin {built.admin.id}; try any role with --as:")
    print_table(["staff", "name", "role"], [[s.id, s.name, s.role.value] for s in built.staff])
    demo_session = Session(str(path), session.as_staff, today.isoformat())
    if no_ui:
        list_table(caseload_service.list_caseload(demo_session.context()))
    else:
        open_interface(demo_session)


COMMANDS = [demo]
