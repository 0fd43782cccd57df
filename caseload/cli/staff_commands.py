"""`caseload staff ...`: the staff who use the store."""

from __future__ import annotations

import click

from caseload.application.clinic import Clinic
from caseload.cli.global_options import pass_clinic
from caseload.cli.printing import print_table
from caseload.presentation.safe_text import printable


@click.group("staff")
def staff_group() -> None:
    """Staff who use the store: phone-line clerks, nurses, supervisors, admins."""


@staff_group.command("add")
@click.argument("staff_id")
@click.option("--name", required=True)
@click.option("--role", required=True, type=click.Choice(["phone", "nurse", "supervisor", "admin"]))
@click.option("--os-account", help="OS account that signs in as this staff member.")
@pass_clinic
def staff_add(clinic: Clinic, staff_id: str, name: str, role: str, os_account: str | None) -> None:
    """Add a staff member (admins only)."""
    member = clinic.add_staff(staff_id, name, role, os_account)
    click.echo(f"Added {member.role.value} {member.id} ({printable(member.name)}).")


@staff_group.command("map")
@click.argument("staff_id")
@click.argument("account")
@pass_clinic
def staff_map(clinic: Clinic, staff_id: str, account: str) -> None:
    """Map an OS account to a staff member (admins only)."""
    clinic.map_account(staff_id, account)
    click.echo(f"OS account '{printable(account)}' now signs in as {staff_id}.")


@staff_group.command("deactivate")
@click.argument("staff_id")
@pass_clinic
def staff_deactivate(clinic: Clinic, staff_id: str) -> None:
    """Stop a staff member from doing anything (admins only); their records stay."""
    clinic.deactivate_staff(staff_id)
    click.echo(f"{staff_id} is inactive.")


@staff_group.command("list")
@pass_clinic
def staff_list(clinic: Clinic) -> None:
    """The staff of this store."""
    rows = [[s.id, s.name, s.role.value, "yes" if s.active else "no", s.os_account or ""] for s in clinic.staff_list()]
    print_table(["id", "name", "role", "active", "OS account"], rows)


COMMANDS = [staff_group]
