"""`caseload host setup`: a shared host where the store belongs to a service account (run as root)."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from caseload.application.host_setup import HostPlan, set_up_host


@click.group()
def host() -> None:
    """Set up this host for several staff accounts sharing one store."""


@host.command()
@click.option("--service-account", required=True, metavar="NAME", help="The account that owns the store (created if missing).")
@click.option("--group", required=True, metavar="GROUP", help="Staff accounts in this group may use caseload.")
@click.option("--store", required=True, type=click.Path(dir_okay=False), help="The store file, in a folder of its own.")
@click.option("--admin", "admin_id", metavar="ID", help="For a new store: its first admin's staff id.")
@click.option("--name", "admin_name", metavar="NAME", help="For a new store: its first admin's name.")
@click.option("--admin-account", metavar="ACCOUNT",
              help="For a new store: its first admin's OS account. Always: named in root's service file as a host "
                   "admin, who may restore the store when it is too damaged to say who its admins are.")
@click.option("--program", type=click.Path(dir_okay=False), help="The caseload program staff run (default: this one).")
@click.option("--wrapper", default="/usr/local/bin/caseload-clinic", show_default=True, type=click.Path(dir_okay=False),
              help="Where to put the wrapper staff type.")
def setup(service_account: str, group: str, store: str, admin_id: str | None, admin_name: str | None,
          admin_account: str | None, program: str | None, wrapper: str) -> None:
    """Create the service account, the store's folder and store, the sudo rule and the wrapper (as root)."""
    plan = HostPlan(service_account, group, Path(store).absolute(), Path(program or sys.argv[0]).absolute(),
                    Path(wrapper).absolute(), admin_id, admin_name, admin_account)
    for line in set_up_host(plan):
        click.echo(line)
    click.echo(f"Staff in {group} now run '{plan.wrapper}'; add them with 'usermod -aG {group} ACCOUNT'.")


COMMANDS = [host]
