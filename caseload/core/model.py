"""The records the whole tool shares: staff, patients and the entries logged for them.

These are plain frozen dataclasses. The store builds them from rows, the core computes
on them, the front ends display them. Nothing here knows about SQL, files or the clock.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import date, datetime
from enum import StrEnum


class Role(StrEnum):
    PHONE = "phone"
    NURSE = "nurse"
    SUPERVISOR = "supervisor"
    ADMIN = "admin"


class PatientStatus(StrEnum):
    ACTIVE = "active"
    PAUSED = "paused"
    DISCHARGED = "discharged"
    PREGNANT = "pregnant"


class Plan(StrEnum):
    NATURAL = "natural"
    TIMED = "timed"
    OVULATION_INDUCTION = "ovulation-induction"
    INSEMINATION = "insemination"


class Kind(StrEnum):
    """The KIND words of the scriptable interface (CLI `log`, CSV `import`)."""

    BLEED = "bleed"
    TEMP = "temp"
    LH = "lh"
    MUCUS = "mucus"
    HCG = "hcg"
    SCAN = "scan"
    MED = "med"
    TRIGGER = "trigger"
    INSEMINATION = "insemination"
    INTERCOURSE = "intercourse"
    SYMPTOM = "symptom"
    NOTE = "note"


class Flow(StrEnum):
    SPOTTING = "spotting"
    LIGHT = "light"
    MODERATE = "moderate"
    HEAVY = "heavy"


# Mucus observations, least to most fertile. The index is the ordinal used by the engine.
MUCUS_SCALE: tuple[str, ...] = ("dry", "damp", "sticky", "creamy", "watery", "stretchy")
# From this ordinal up, a day counts as peak-type (most fertile) mucus.
MUCUS_PEAK_LEVEL = 4

# Flags that make a temperature reading unreliable for the thermal shift rules.
DISTURBANCE_FLAGS: tuple[str, ...] = ("illness", "poor-sleep", "alcohol", "late", "other")
# A bleed marked mid-cycle (intermenstrual) starts no cycle.
MIDCYCLE_FLAG = "midcycle"


@dataclass(frozen=True)
class Staff:
    id: str
    name: str
    role: Role
    active: bool = True
    os_account: str | None = None


@dataclass(frozen=True)
class Patient:
    id: str
    name: str
    born: date
    nurse_id: str | None
    status: PatientStatus = PatientStatus.ACTIVE
    plan: Plan = Plan.NATURAL
    created: date | None = None
    charting_temps: bool = True
    status_since: date | None = None  # date of record of the last status change; None if never changed


@dataclass(frozen=True)
class Scan:
    """One ultrasound: follicle diameters in mm (largest first) and endometrial thickness in mm."""

    follicles_mm: tuple[float, ...]
    endometrium_mm: float | None = None


@dataclass(frozen=True)
class Value:
    """A parsed, normalised entry value.

    Exactly the fields that make sense for the kind are set:
    temp -> number (degrees C, 2 dp); hcg -> word (negative/positive) or number (IU/L);
    lh -> word or number (IU/L); bleed -> word (a Flow); mucus -> word (from MUCUS_SCALE);
    scan -> scan; free-text kinds -> text.
    """

    number: float | None = None
    word: str | None = None
    scan: Scan | None = None
    text: str | None = None

    def display(self) -> str:
        if self.scan is not None:
            parts = ["follicles " + (", ".join(f"{f:g}" for f in self.scan.follicles_mm) or "none")]
            if self.scan.endometrium_mm is not None:
                parts.append(f"endometrium {self.scan.endometrium_mm:g}")
            return "; ".join(parts)
        if self.word is not None:
            return self.word
        if self.number is not None:
            return f"{self.number:g}"
        return self.text or ""


@dataclass(frozen=True)
class Entry:
    """One logged observation, as stored. Corrections are new entries that supersede older ones."""

    id: int
    patient_id: str
    day: date
    kind: Kind
    value: Value
    raw: str
    time: str | None = None
    flags: tuple[str, ...] = ()
    note: str = ""
    by: str = ""
    at: datetime | None = None
    supersedes: int | None = None
    voided_reason: str | None = None
    superseded_by: int | None = None
    amend_reason: str | None = None

    @property
    def current(self) -> bool:
        """True when this entry counts: neither voided nor replaced by a correction."""
        return self.voided_reason is None and self.superseded_by is None

    @property
    def disturbed(self) -> bool:
        return any(f in DISTURBANCE_FLAGS for f in self.flags)


@dataclass(frozen=True)
class Observation:
    """What the cycle engine reads: a current entry reduced to the day and its value."""

    day: date
    kind: Kind
    value: Value
    flags: tuple[str, ...] = field(default=())
    time: str | None = None

    @property
    def disturbed(self) -> bool:
        return any(f in DISTURBANCE_FLAGS for f in self.flags)


def observations(entries: list[Entry]) -> list[Observation]:
    """The current entries as observations, in day order (stable for equal days)."""
    current = [e for e in entries if e.current]
    current.sort(key=lambda e: (e.day, e.time or "", e.id))
    return [Observation(e.day, e.kind, e.value, e.flags, e.time) for e in current]


@dataclass(frozen=True)
class Actor:
    """Who does something: the staff member, and the OS account the command ran under."""

    staff: Staff
    os_account: str

    @property
    def id(self) -> str:
        return self.staff.id

    @property
    def role(self) -> Role:
        return self.staff.role


class Severity(StrEnum):
    URGENT = "urgent"
    TODAY = "today"
    SOON = "soon"
    INFO = "info"

    @property
    def rank(self) -> int:
        """0 for the most pressing; sorts the morning list."""
        return list(Severity).index(self)


class AlertState(StrEnum):
    OPEN = "open"
    ACKNOWLEDGED = "acknowledged"
    SNOOZED = "snoozed"
    RESOLVED = "resolved"


@dataclass(frozen=True)
class Alert:
    """A raised alert as stored, with its lifecycle."""

    id: int
    patient_id: str
    kind: str
    key: str
    severity: Severity
    raised_on: date
    due: date
    message: str
    evidence: dict
    rule: str
    source: str
    state: AlertState
    handled_by: str | None = None
    handled_at: datetime | None = None
    note: str | None = None
    snooze_until: date | None = None
    resolved_reason: str | None = None


@dataclass(frozen=True)
class AlertStep:
    """One thing that happened to an alert, as its audit row recorded it: raised, escalated,
    acknowledged, snoozed, reopened, resolved by a person or resolved automatically."""

    alert_id: int
    action: str  # the audit action without its "alert." prefix: raise, ack, snooze, resolve, auto-resolve, ...
    by: str
    at: datetime
    note: str | None = None
    snooze_until: date | None = None
    reason: str | None = None  # why it was resolved automatically
