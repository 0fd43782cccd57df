"""The one way into a store for every front end: a `Clinic`, opened from a store path and an identity.

A Clinic holds the store, who is acting, the clinic's date of record (its real local date, in the
time zone kept in the store), the day being looked at ("as of", the date of record unless asked
otherwise) and the protocol in force. Its methods are the use cases; each checks permissions, runs
in one transaction (nesting inside any the caller holds) and returns typed results. The bodies live
in one module per noun (`entries`, `patients`, `staff`, `alert_handling`, ...).

The date rule: writes and refreshes always use the date of record. Any other as-of date is a
read-only view; a write under it is refused in one line, except for an admin in maintenance mode
(`maintenance_date`), whose writes record the day they were made as of and are audited as such.
"""

from __future__ import annotations

import sqlite3
import threading
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import date
from pathlib import Path
from typing import TYPE_CHECKING, Callable

from caseload.core.model import Actor, Alert, Entry, Kind, Patient, Role, Staff
from caseload.core.parse import InputError, parse_day, parse_entry
from caseload.core.settings import Protocol
from caseload.application import alert_handling, caseload_view, entries, patients, protocol, staff, store_care
from caseload.application.caseload_view import CaseloadLine, CaseloadRead, PatientRecord
from caseload.application.context import Context, allowed
from caseload.application.entries import Logged
from caseload.application.errors import Refused
from caseload.application.identity import not_mapped, os_account, resolve_actor
from caseload.application.protocol import ProtocolInUse
from caseload.application.morning_refresh import run_morning_refresh
from caseload.application.recompute import Progress, Recomputed, RefreshReport, recompute_everything, refresh_all
from caseload.store import Report, Store, StoreError, creating, refusing_damage
from caseload.store.backup_restore import Restored

if TYPE_CHECKING:  # the modules themselves load in the methods that use them, see `caseload.cli`
    from caseload.application import referral, weekly_summary
    from caseload.application.csv_import import Imported
    from caseload.application.week.figures import WeeklySummary


@dataclass(frozen=True)
class Identity:
    """Who opens the store: the OS account (from the OS itself) and, for an admin's account, `--as`."""

    account: str
    as_staff: str | None = None

    @classmethod
    def from_os(cls, as_staff: str | None = None) -> Identity:
        return cls(os_account(), as_staff)


@dataclass(frozen=True)
class SameDayReading:
    """A temperature was not logged: the patient already has a counting one that day."""

    existing: Entry
    value: str


@dataclass(frozen=True)
class SecondLook:
    """An entry was not logged yet: it is unusual, and saving it as typed needs a confirmation."""

    question: str


def plain_reason(error: BaseException) -> str:
    """One line for a person about a failed use case, without a traceback."""
    if isinstance(error, (InputError, Refused, StoreError)):
        return str(error)
    if isinstance(error, PermissionError):
        return "no permission to use the store from this account: ask an admin"
    if isinstance(error, sqlite3.OperationalError) and "locked" in str(error).lower():
        return "the store is busy with another terminal's change: try again in a moment"
    if isinstance(error, sqlite3.Error):
        return f"the store could not be read or written ({error})"
    return f"unexpected {type(error).__name__}: {error}"


class Clinic:
    """One store, one acting staff member, one day of record. Safe to share between threads: each
    call holds the clinic's lock, so its one SQLite connection is never used by two at once."""

    def __init__(
        self,
        store: Store,
        identity: Identity,
        *,
        as_of: date | None = None,
        maintenance_date: date | None = None,
        date_of_record: date | None = None,
    ):
        """`as_of`: a read-only view of another day (`--today`). `maintenance_date`: an admin's
        audited writes as of another day. `date_of_record`: the clinic's real date, given only by
        tests (never the environment); by default today in the clinic's time zone."""
        self.store = store
        self.identity = identity
        self.real_date = date_of_record or staff.clinic_today(store)
        self.timezone = staff.clinic_timezone(store)
        self._actor = None if store.staff.by_os_account(identity.account) is None else resolve_actor(
            store, identity.account, identity.as_staff
        )
        self.maintenance_date = maintenance_date
        if maintenance_date is not None:
            if self._actor is None or self._actor.role is not Role.ADMIN:
                who = "nobody" if self._actor is None else f"{self._actor.id} ({self._actor.role.value})"
                raise Refused(f"--maintenance-date is honoured only for an admin; this is {who}")
        self.as_of = as_of or self.date_of_record
        self.protocol: Protocol = protocol.load_protocol(store)
        self.lock = threading.RLock()

    @classmethod
    def create(cls, path: str | Path, identity: Identity, admin_id: str, name: str, timezone: str,
               date_of_record: date | None = None) -> Actor:
        """Set up a new store at `path` with its first admin, mapped to the identity's OS account."""
        staff.parse_timezone(timezone)  # refused before any file is made
        with creating(Path(path)), Store(path) as store:  # a failed set-up leaves no half-made store
            return staff.init_store(store, admin_id, name, identity.account, timezone, date_of_record)

    @classmethod
    def open(cls, path: str | Path, identity: Identity, **dates) -> Clinic:
        """Open the store file at `path` (it must exist) for `identity`; see __init__ for the dates."""
        store = Store(path, must_exist=True)  # only `create` makes a store
        try:
            with refusing_damage(store.path):
                return cls(store, identity, **dates)
        except BaseException:
            store.close()
            raise

    def close(self) -> None:
        self.store.close()

    def __enter__(self) -> Clinic:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    # --- who and when

    @property
    def date_of_record(self) -> date:
        """The day writes and refreshes are made as of: the real date, or an admin's maintenance date."""
        return self.maintenance_date or self.real_date

    @property
    def signed_in(self) -> bool:
        return self._actor is not None

    @property
    def actor(self) -> Actor:
        if self._actor is None:
            raise not_mapped(self.identity.account)
        return self._actor

    @contextmanager
    def _using_store(self) -> Iterator[None]:
        """One call on the store: the clinic's lock held, and a damaged page met on the way refused
        in one line (StoreDamaged), never a traceback."""
        with self.lock, refusing_damage(self.store.path):
            yield

    @property
    def viewing_another_day(self) -> bool:
        return self.as_of != self.date_of_record

    def may(self, action: str) -> bool:
        """Whether the acting staff member's role allows an action (each use case checks anyway)."""
        return self._actor is not None and allowed(self._actor, action)

    def _reading(self) -> Context:
        return Context(self.store, self.actor, self.as_of, self.protocol)

    def _writing(self, doing: str) -> Context:
        """The context of a write, or a refusal when the day under view is not the date of record."""
        if self.viewing_another_day:
            raise Refused(
                f"the view as of {self.as_of.isoformat()} is read-only: {doing} uses the clinic's date of record "
                f"({self.date_of_record.isoformat()}); drop --today / CASELOAD_TODAY to do it"
            )
        return Context(self.store, self.actor, self.date_of_record, self.protocol)

    def _write(self, doing: str, use_case: Callable, *args, **kwargs):
        """Run a writing use case as one transaction as of the date of record, rerun whole if another
        writer held the lock. In maintenance mode the transaction also records who wrote as of which
        day, and what the real date was."""
        with self._using_store():
            ctx = self._writing(doing)

            def unit():
                self._audit_maintenance(ctx, doing)
                return use_case(ctx, *args, **kwargs)

            return self.store.transact(unit, self.date_of_record)

    def _audit_maintenance(self, ctx: Context, doing: str) -> None:
        """In maintenance mode, inside the caller's transaction: who wrote as of which day, and the real date."""
        if self.maintenance_date is not None:
            self.store.audit.record(ctx.actor, "maintenance.write", "meta", None,
                                    after={"date_of_record": self.date_of_record.isoformat(),
                                           "real_date": self.real_date.isoformat(), "doing": doing})

    def _write_in_batches(self, doing: str, use_case: Callable, *args):
        """Run a use case that writes in many short transactions of its own (the whole-caseload refresh),
        so other terminals' writes get the lock between them; each records the date of record."""
        with self._using_store():
            ctx = self._writing(doing)
            self._mark_maintenance(ctx, doing)
            return use_case(ctx, *args)

    def _mark_maintenance(self, ctx: Context, doing: str) -> None:
        """Before a write in batches, in maintenance mode: its maintenance row in a transaction of its own."""
        if self.maintenance_date is not None:
            self.store.transact(lambda: self._audit_maintenance(ctx, doing), self.date_of_record)

    def _maintain(self, doing: str, use_case: Callable, *args):
        """Backup and restore: they copy or replace the whole file, so they open their own short
        transaction for the audit row instead of running inside one."""
        with self._using_store():
            return use_case(self._writing(doing), *args)

    def _read(self, use_case: Callable, *args, **kwargs):
        with self._using_store():
            return use_case(self._reading(), *args, **kwargs)

    # --- sign-in (before anyone acts)

    def check_mapped(self) -> Actor | None:
        """Look again whether an admin has mapped this OS account: its staff member once mapped, else
        None. Nobody takes a record from an unmapped account: records carry roles."""
        with self._using_store():
            if self.store.staff.by_os_account(self.identity.account) is not None:
                self._actor = resolve_actor(self.store, self.identity.account, self.identity.as_staff)
            return self._actor

    # --- entries

    def log(self, patient_id: str, kind: str, value: str, on: str = "today", at: str | None = None,
            flags=(), note: str = "") -> Logged:
        return self._write("logging", entries.log_entry, patient_id, kind, value, on, at, flags, note)

    def log_call(self, patient_id: str, kind: Kind, value: str, on: str, at: str | None, flags: str,
                 note: str, confirmed: bool = False) -> Logged | SameDayReading | SecondLook:
        """The phone line's save: log the entry; or, for a temperature on a day that already has one,
        return that reading so the caller can offer a correction; or, unless `confirmed`, say why an
        unusual entry needs a second look."""
        with self._using_store():
            ctx = self._writing("logging")
            parsed = parse_entry(kind, value, ctx.today, on=on, at=at, flags=flags, note=note)
            entries.check_recent(ctx, parsed)  # refused before any question about an entry it would refuse
            # The id as registered, whatever the case typed: the questions below read her entries by it.
            patient_id = patients.get_patient(ctx, patient_id).id
            question = None if confirmed else entries.second_look(ctx, patient_id, parsed)
            if question is not None:
                return SecondLook(question)
            if kind is Kind.TEMP:
                same = entries.same_day_temperature(ctx, patient_id, parse_day(on, ctx.today))
                if same is not None:
                    return SameDayReading(same, value)
            return self.log(patient_id, kind.value, value, on, at, flags, note)

    def amend(self, entry_id: int | str, value: str, reason: str) -> Logged:
        return self._write("correcting an entry", entries.amend_entry, entry_id, value, reason)

    def void(self, entry_id: int | str, reason: str) -> Logged:
        return self._write("voiding an entry", entries.void_entry, entry_id, reason)

    def entries(self, patient_id: str) -> list[Entry]:
        return self._read(entries.patient_entries, patient_id)

    def import_csv(self, data: bytes) -> Imported:
        from caseload.application import csv_import

        return self._write("importing", csv_import.import_csv, data)

    # --- patients and staff

    def register_patient(self, patient_id: str, name: str, born: str, nurse: str | None = None,
                         plan: str = "natural", charting_temps: bool = True) -> Patient:
        return self._write("registering a patient", patients.add_patient, patient_id, name, born, nurse, plan,
                           charting_temps)

    def next_patient_id(self) -> str:
        """The id a registration form offers: the one after the highest numbered id in the store."""
        return self._read(patients.next_patient_id)

    def set_patient(self, patient_id: str, plan: str | None = None, status: str | None = None,
                    nurse: str | None = None) -> Patient:
        return self._write("changing a patient", patients.update_patient, patient_id, plan=plan, status=status,
                           nurse=nurse)

    def staff_list(self) -> list[Staff]:
        with self._using_store():
            self.actor  # noqa: B018 - refuses an unmapped account
            return self.store.staff.all()

    def add_staff(self, staff_id: str, name: str, role: str, account: str | None = None) -> Staff:
        return self._write("adding staff", staff.add_staff, staff_id, name, role, account)

    def map_account(self, staff_id: str, account: str) -> Staff:
        return self._write("mapping an OS account", staff.map_account, staff_id, account)

    def deactivate_staff(self, staff_id: str) -> Staff:
        return self._write("deactivating staff", staff.set_active, staff_id, False)

    # --- alerts

    def caller_view_only(self, alert: Alert) -> bool:
        """Whether the acting staff member is given only the caller's view of `alert` (phone staff, a
        clinical kind): its message is then the protocol's words for the caller, its evidence empty."""
        return self.signed_in and alert_handling.caller_view_only(self.actor, alert.kind)

    def alerts(self, state: str = "open", kind: str | None = None, nurse: str | None = None) -> list[Alert]:
        return self._read(alert_handling.list_alerts, state, kind, nurse)

    def acknowledge(self, alert_id: int | str, note: str | None) -> Alert:
        return self._write("acknowledging an alert", alert_handling.acknowledge, alert_id, note)

    def snooze(self, alert_id: int | str, until: str, note: str | None) -> Alert:
        return self._write("snoozing an alert", alert_handling.snooze, alert_id, until, note)

    def resolve(self, alert_id: int | str, note: str | None) -> Alert:
        return self._write("resolving an alert", alert_handling.resolve, alert_id, note)

    def refresh(self) -> RefreshReport:
        """Every patient's snapshot and alerts brought up to the date of record, computed outside any
        write and written a few patients per transaction."""
        return self._write_in_batches("the alert refresh", refresh_all)

    def refresh_on_own_connection(self, progress: Progress | None = None) -> RefreshReport:
        """The interface's morning refresh, for a worker thread: the same refresh on a store
        connection of its own, without the clinic's lock, so the interface stays free to read and
        save meanwhile. `progress(stage, done, total)` is called from the worker's thread."""
        with self._using_store():
            ctx = self._writing("the morning refresh")
            self._mark_maintenance(ctx, "the morning refresh")
        with refusing_damage(self.store.path):
            return run_morning_refresh(self.store.path, ctx.actor, ctx.today, progress)

    def morning_refresh_due(self, lines: list[CaseloadLine] | tuple[CaseloadLine, ...]) -> bool:
        """Whether opening the list should run the refresh: some snapshot is older than the date of
        record, and the list is not a view of another day (a view never writes)."""
        if self.viewing_another_day or not self.may("alert.refresh"):
            return False
        return any(line.snapshot is None or line.snapshot.computed_on < self.date_of_record for line in lines)

    # --- reading the caseload

    def morning_list(self) -> list[CaseloadLine]:
        return self._read(caseload_view.list_caseload)

    def caseload_read(self) -> CaseloadRead:
        """The morning list with the store's list mark it is current to."""
        return self._read(caseload_view.read_caseload)

    def caseload_since(self, mark: int, lines: tuple[CaseloadLine, ...]) -> CaseloadRead:
        """The list read at `mark` brought up to date: only the patients changed since are read again."""
        return self._read(caseload_view.caseload_since, mark, lines)

    def store_version(self) -> int:
        """A number that moves whenever another connection commits to the store (not this one's own
        writes): asking costs no table read, so an idle screen can ask often."""
        with self._using_store():
            return self.store.data_version()

    def list_after(self, lines: tuple[CaseloadLine, ...], done: Logged) -> tuple[CaseloadLine, ...]:
        """The morning list after a save, with the saved patient's row rebuilt from what the save
        returned, in triage order again; no store read."""
        changed = [caseload_view.row_after(line, done.refreshed, self.as_of) if line.patient.id == done.entry.patient_id
                   else line for line in lines]
        return tuple(sorted(changed, key=CaseloadLine.sort_key))

    def list_after_registering(self, lines: tuple[CaseloadLine, ...], patient: Patient) -> tuple[CaseloadLine, ...]:
        """The morning list with a patient just registered, in triage order; no store read."""
        return tuple(sorted((*lines, caseload_view.registered_row(patient)), key=CaseloadLine.sort_key))

    def patient_record(self, patient_id: str) -> PatientRecord:
        return self._read(caseload_view.show_patient, patient_id)

    # --- weekly summary

    def last_complete_week(self) -> str:
        """The default week of the summary: the last one complete by the day under view."""
        from caseload.application import weekly_summary

        return weekly_summary.last_complete_week(self.as_of)

    def weekly_summary(self, week: str) -> WeeklySummary:
        from caseload.application import weekly_summary

        return self._read(weekly_summary.compute_summary, week)

    def export_summary(self, week: str, fmt: str, out: Path, deidentify: bool,
                       render: weekly_summary.Renderer, force: bool = False) -> Path:
        """Write one week's summary with `render` (the exports' writer for the format), audited. A view:
        allowed as of any day, its audit row recording the date of record."""
        from caseload.application import weekly_summary

        return self._read(weekly_summary.export_summary, week, fmt, out, deidentify, render, force,
                          self.date_of_record)

    # --- records that travel

    def referral_pack(self, patient_id: str, out: Path, cycles: int, paper: str, force: bool,
                      render: referral.PackRenderer) -> Path:
        """Write one patient's referral pack (PDF or HTML by the file's suffix) with `render`, audited.
        A view: allowed as of any day, its audit row recording the date of record."""
        from caseload.application import referral

        return self._read(referral.make_pack, patient_id, out, cycles, paper, force, render, self.date_of_record)

    def fhir_export(self, patient_id: str | None, out: Path, since: str | None, deidentify: bool, force: bool,
                    write: referral.BundleWriter) -> tuple[Path, int]:
        """Write one patient (or every one, for None) as a FHIR R4 Bundle with `write`, audited; returns
        the path and how many resources it holds. A view, like the pack."""
        from caseload.application import referral

        return self._read(referral.export_fhir, patient_id, out, since, deidentify, force, write,
                          self.date_of_record)

    # --- the store itself

    def backup(self, target: str) -> Path:
        return self._maintain("a backup", store_care.backup, target)

    def restore(self, source: str, force: bool = False) -> Restored:
        """Replace the store with a verified backup; `force` accepts losing what the backup lacks."""
        done = self._maintain("a restore", store_care.restore, source, force)
        self.protocol = protocol.load_protocol(self.store)
        return done

    def check(self) -> Report:
        return self._read(store_care.check)

    def refuse_damaged(self) -> None:
        """The quick check this clinic's first write would pay, run now on a connection of its own and
        without the clinic's lock (reads go on meanwhile): StoreDamaged when the file is damaged. The
        interface runs it once its list is drawn, so damage is said before anyone types a call."""
        self.store.refuse_damaged(aside=True)

    def recompute(self) -> Recomputed:
        """Throw the kept completed cycles away and recompute every patient from every entry,
        saying whose kept cycles had given another result (none, unless they were wrong)."""
        return self._write_in_batches("the recompute", recompute_everything)

    @staticmethod
    def restore_damaged(path: str | Path, source: str, identity: Identity,
                        date_of_record: date | None = None) -> Restored:
        """Restore over a store that cannot be opened (a Clinic cannot be opened on it); who may is
        `store_care.restore_damaged`'s rule, never the backup's staff. The file is kept byte for byte."""
        return store_care.restore_damaged(Path(path), source, identity.account, identity.as_staff, date_of_record)

    @staticmethod
    def check_damaged(path: str | Path) -> Report:
        """The check's report on a store too damaged or altered to open."""
        return store_care.check_damaged(Path(path))

    # --- the clinic protocol

    def protocol_in_use(self) -> ProtocolInUse:
        """The stored protocol version in force (no permission needed)."""
        with self._using_store():
            return protocol.protocol_in_use(self.store)

    def protocol_show(self) -> ProtocolInUse:
        return self._read(protocol.show_protocol)

    def protocol_use(self, path: str) -> tuple[ProtocolInUse, RefreshReport]:
        """Store a checked file as the next protocol version, then refresh every patient under it
        (the version in one transaction, the refresh in batches)."""
        in_use, report = self._write_in_batches("changing the protocol", protocol.use_protocol, path)
        self.protocol = in_use.protocol
        return in_use, report

    def protocol_export(self, path: str) -> ProtocolInUse:
        return self._read(protocol.export_protocol, path)
