"""Setting up a store and managing the staff who use it."""

from __future__ import annotations

import secrets

from caseload.core.model import Actor, Role, Staff
from caseload.core.parse import parse_choice, parse_id, parse_name
from caseload.application.context import Context
from caseload.application.errors import NotFound, Refused
from caseload.store import Store

DEFAULT_TIMEZONE = "Europe/London"


def init_store(store: Store, admin_id: str, name: str, account: str, timezone: str = DEFAULT_TIMEZONE) -> Actor:
    """Make a new store's first admin, mapped to the OS account that runs it."""
    admin = Staff(parse_id(admin_id, "staff"), parse_name(name), Role.ADMIN, True, account)
    if store.staff.all():
        raise Refused(f"{store.path} is already set up: add staff with 'caseload staff add'")
    actor = Actor(admin, account)

    def work():
        store.staff.add(actor, admin)
        store.db.set_meta("timezone", timezone)
        store.db.set_meta("pseudonym_secret", secrets.token_hex(32))
        store.db.audit(actor, "store.init", "meta", None, after={"timezone": timezone})

    store.transact(work)
    return actor


def add_staff(ctx: Context, staff_id: str, name: str, role: str, account: str | None = None) -> Staff:
    ctx.require("staff.add")
    staff = Staff(parse_id(staff_id, "staff"), parse_name(name), parse_choice(role, Role, "role"), True, account)
    if ctx.store.staff.get(staff.id):
        raise Refused(f"staff id {staff.id} is taken: choose another")
    if account and ctx.store.staff.by_os_account(account):
        raise Refused(f"OS account '{account}' is already mapped to {ctx.store.staff.by_os_account(account).id}")
    return ctx.store.transact(lambda: ctx.store.staff.add(ctx.actor, staff))


def get_staff(store: Store, staff_id: str) -> Staff:
    staff = store.staff.get(staff_id)
    if staff is None:
        raise NotFound(f"no staff member '{staff_id}': see 'caseload staff list'")
    return staff


def map_account(ctx: Context, staff_id: str, account: str) -> Staff:
    """Map an OS account to a staff record (moving it off any record it was on)."""
    ctx.require("staff.update")
    staff = get_staff(ctx.store, staff_id)
    holder = ctx.store.staff.by_os_account(account)
    if holder and holder.id != staff.id:
        raise Refused(f"OS account '{account}' is mapped to {holder.id}: unmap it first")
    updated = Staff(staff.id, staff.name, staff.role, staff.active, account)
    ctx.store.transact(lambda: ctx.store.staff.update(ctx.actor, staff, updated))
    return updated


def set_active(ctx: Context, staff_id: str, active: bool) -> Staff:
    ctx.require("staff.update")
    staff = get_staff(ctx.store, staff_id)
    if staff.id == ctx.actor.id and not active:
        raise Refused("you cannot deactivate yourself: ask another admin")
    updated = Staff(staff.id, staff.name, staff.role, active, staff.os_account)
    ctx.store.transact(lambda: ctx.store.staff.update(ctx.actor, staff, updated))
    return updated


def claim_staff(store: Store, staff_id: str, account: str) -> Actor:
    """First sign-in from an unmapped OS account: take an active staff record that has no account yet."""
    if store.staff.by_os_account(account):
        raise Refused(f"OS account '{account}' is already mapped to a staff member")
    staff = get_staff(store, staff_id)
    if not staff.active:
        raise Refused(f"staff member {staff.id} is inactive and can do nothing")
    if staff.os_account:
        raise Refused(f"{staff.id} is already signed to another OS account: ask an admin")
    if staff.role is Role.ADMIN:  # else any unmapped account could make itself an admin
        raise Refused(f"{staff.id} is an admin record: another admin maps it with 'caseload staff map {staff.id} ACCOUNT'")
    claimed = Staff(staff.id, staff.name, staff.role, True, account)
    actor = Actor(claimed, account)
    store.transact(lambda: store.staff.update(actor, staff, claimed))
    return actor
