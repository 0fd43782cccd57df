"""Setting up a store and managing the staff who use it."""

from __future__ import annotations

import secrets
from datetime import date, datetime
from zoneinfo import ZoneInfo

from caseload.core.model import Actor, Role, Staff
from caseload.core.parse import InputError, one_line, parse_choice, parse_id, parse_name
from caseload.application.context import Context
from caseload.application.errors import NotFound, Refused
from caseload.store import Store
from caseload.store.verify import meta_as_audited

DEFAULT_TIMEZONE = "Europe/London"


def init_store(
    store: Store, admin_id: str, name: str, account: str, timezone: str = DEFAULT_TIMEZONE, day: date | None = None
) -> Actor:
    """Make a new store's first admin, mapped to the OS account that runs it. `day` is the date of
    record (default: today in the clinic's time zone)."""
    admin = Staff(parse_id(admin_id, "staff"), parse_name(name), Role.ADMIN, True, account)
    zone = parse_timezone(timezone)
    if store.staff.all():
        raise Refused(f"{store.path} is already set up: add staff with 'caseload staff add'")
    actor = Actor(admin, account)
    settings = {"timezone": zone, "pseudonym_secret": secrets.token_hex(32)}
    with store.atomic(day or local_today(zone)):
        store.staff.add(actor, admin)
        for key, value in settings.items():
            store.set_meta(key, value)
        # Audited as `check` compares them: a time zone or secret edited behind the tool's back shows.
        store.audit.record(actor, "store.init", "meta", None, after=meta_as_audited(settings))
    return actor


def local_today(zone: str) -> date:
    """The calendar day it is now in a time zone: the clinic's date of record."""
    return datetime.now(clinic_zone(zone)).date()


def clinic_zone(name: str) -> ZoneInfo:
    """The IANA time zone `name` (and "UTC" in any letter case); raises for a name not known."""
    return ZoneInfo("UTC" if name.lower() == "utc" else name)


def clinic_timezone(store: Store) -> str:
    """The clinic's IANA time zone, stored at set-up."""
    return store.meta("timezone") or DEFAULT_TIMEZONE


def clinic_today(store: Store) -> date:
    """The clinic's real date now, in the time zone stored at set-up."""
    return local_today(clinic_timezone(store))


def parse_timezone(text: str) -> str:
    """An IANA time zone name ('Europe/London'), or one line saying what is accepted."""
    name = (text or "").strip()
    try:
        clinic_zone(name)
    except Exception:  # ZoneInfoNotFoundError, or ValueError for text that is no key at all
        raise InputError(f"time zone '{one_line(name)}' not known: use an IANA name such as Europe/London") from None
    return name


def add_staff(ctx: Context, staff_id: str, name: str, role: str, account: str | None = None) -> Staff:
    ctx.require("staff.add")
    staff = Staff(parse_id(staff_id, "staff"), parse_name(name), parse_choice(role, Role, "role"), True, account)
    if ctx.store.staff.get(staff.id):
        raise Refused(f"staff id {staff.id} is taken: choose another")
    if account and ctx.store.staff.by_os_account(account):
        raise Refused(f"OS account '{account}' is already mapped to {ctx.store.staff.by_os_account(account).id}")
    with ctx.store.atomic(ctx.today):
        return ctx.store.staff.add(ctx.actor, staff)


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
    with ctx.store.atomic(ctx.today):
        ctx.store.staff.update(ctx.actor, staff, updated)
    return updated


def set_active(ctx: Context, staff_id: str, active: bool) -> Staff:
    ctx.require("staff.update")
    staff = get_staff(ctx.store, staff_id)
    if staff.id == ctx.actor.id and not active:
        raise Refused("you cannot deactivate yourself: ask another admin")
    updated = Staff(staff.id, staff.name, staff.role, active, staff.os_account)
    with ctx.store.atomic(ctx.today):
        ctx.store.staff.update(ctx.actor, staff, updated)
    return updated
