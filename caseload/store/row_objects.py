"""Conversions between table rows and the core dataclasses."""

from __future__ import annotations

import json
from collections.abc import Callable
from dataclasses import fields, is_dataclass
from datetime import date, datetime
from enum import Enum
from functools import lru_cache
from types import NoneType, UnionType
from typing import Any, get_args, get_origin, get_type_hints

from caseload.core.model import Entry, Kind, Observation, Patient, PatientStatus, Plan, Role, Scan, Staff, Value

_KINDS = {k.value: k for k in Kind}


def staff_from_row(row: dict) -> Staff:
    return Staff(row["id"], row["name"], Role(row["role"]), bool(row["active"]), row["os_account"])


def patient_from_row(row: dict) -> Patient:
    return Patient(
        id=row["id"],
        name=row["name"],
        born=date.fromisoformat(row["born"]),
        nurse_id=row["nurse_id"],
        status=PatientStatus(row["status"]),
        plan=Plan(row["plan"]),
        created=date.fromisoformat(row["created"]),
        charting_temps=bool(row["charting_temps"]),
        status_since=date.fromisoformat(row["status_since"]) if row.get("status_since") else None,
    )


def patient_to_row(p: Patient) -> dict:
    return {
        "id": p.id,
        "name": p.name,
        "born": p.born.isoformat(),
        "nurse_id": p.nurse_id,
        "status": p.status.value,
        "plan": p.plan.value,
        "created": p.created.isoformat(),
        "charting_temps": int(p.charting_temps),
        "status_since": None if p.status_since is None else p.status_since.isoformat(),
    }


def patient_history_row(p: Patient, at: str, by_staff: str) -> dict:
    """The version of a patient's care that takes effect at `at` (see the patient_history table)."""
    return {"patient_id": p.id, "at": at, "status": p.status.value, "plan": p.plan.value, "nurse_id": p.nurse_id,
            "charting_temps": int(p.charting_temps), "by_staff": by_staff}


def value_columns(v: Value) -> dict:
    scan = None
    if v.scan is not None:
        scan = json.dumps({"follicles_mm": list(v.scan.follicles_mm), "endometrium_mm": v.scan.endometrium_mm})
    return {"number": v.number, "word": v.word, "scan": scan, "text": v.text}


def value_from_row(row: dict) -> Value:
    scan = None
    if row["scan"]:
        s = json.loads(row["scan"])
        scan = Scan(tuple(s["follicles_mm"]), s["endometrium_mm"])
    return Value(number=row["number"], word=row["word"], scan=scan, text=row["text"])


def entry_from_row(row: dict) -> Entry:
    return Entry(
        id=row["id"],
        patient_id=row["patient_id"],
        day=date.fromisoformat(row["day"]),
        kind=Kind(row["kind"]),
        value=value_from_row(row),
        raw=row["raw"],
        time=row["time"],
        flags=tuple(f for f in row["flags"].split(",") if f),
        note=row["note"],
        by=row["by_staff"],
        at=datetime.fromisoformat(row["at"]),
        supersedes=row["supersedes"],
        voided_reason=row["voided_reason"],
        superseded_by=row.get("superseded_by"),
        amend_reason=row["amend_reason"],
    )


@lru_cache(maxsize=8192)
def _plain_value(number: float | None, word: str | None, text: str | None) -> Value:
    # Values repeat across a caseload (temperatures to 2 dp, flow and mucus words): frozen, so shared.
    return Value(number=number, word=word, text=text)


@lru_cache(maxsize=256)
def _flags(text: str) -> tuple[str, ...]:
    return tuple(f for f in text.split(",") if f)


def observation_from_row(row: tuple) -> Observation:
    """(patient_id, day, kind, number, word, scan, text, flags, time) as the cycle engine reads it."""
    _, day, kind, number, word, scan, text, flags, time = row
    if scan:
        value = value_from_row({"number": number, "word": word, "scan": scan, "text": text})
    else:
        value = _plain_value(number, word, text)
    return Observation(date.fromisoformat(day), _KINDS[kind], value, _flags(flags) if flags else (), time)


def plain(value: Any) -> Any:
    """A frozen record as JSON-ready lists (fields in order), days as ISO text, enums as their value.
    Numbers keep their type, so `restored(type, plain(x)) == x` and prints alike."""
    if is_dataclass(value):
        return [plain(getattr(value, f.name)) for f in fields(value)]
    if isinstance(value, tuple):
        return [plain(v) for v in value]
    if isinstance(value, Enum):
        return value.value
    if isinstance(value, date):
        return value.isoformat()
    return value


def restored(kind: type, data: Any) -> Any:
    """The record of type `kind` that `plain` turned into `data`."""
    return _restorer(kind)(data)


@lru_cache(maxsize=None)
def _restorer(kind: Any) -> Callable[[Any], Any]:
    """A function rebuilding values of `kind` (a dataclass, tuple, optional, day, enum or JSON
    scalar), made once per type from its annotations. JSON scalars, and optional ones, come back as
    they are (`_AS_IS`) and are passed over: kept cycles are read on every refresh."""
    args = get_args(kind)
    if isinstance(kind, UnionType):
        (inner,) = [a for a in args if a is not NoneType]
        one = _restorer(inner)
        return one if one is _AS_IS else lambda v: None if v is None else one(v)
    if get_origin(kind) is tuple:
        if len(args) == 2 and args[1] is Ellipsis:
            each = _restorer(args[0])
            return tuple if each is _AS_IS else lambda v: tuple(map(each, v))
        parts = [_restorer(a) for a in args]
        return lambda v: tuple(part(x) for part, x in zip(parts, v))
    if is_dataclass(kind):
        hints, names = get_type_hints(kind), [f.name for f in fields(kind)]
        changed = [(i, part) for i, name in enumerate(names) if (part := _restorer(hints[name])) is not _AS_IS]

        def filled(*values: Any) -> Any:
            # The instance `kind(*values)` makes, without a frozen __init__'s setattr per field.
            made = object.__new__(kind)
            made.__dict__.update(zip(names, values))
            return made

        make = filled if _plain_init(kind) else kind

        def build(v: list) -> Any:
            for i, part in changed:  # `v` is a list fresh from json.loads: rebuilt in place
                v[i] = part(v[i])
            return make(*v)

        return build
    if kind is date:
        return date.fromisoformat
    if isinstance(kind, type) and issubclass(kind, Enum):
        return kind
    if kind in (int, float, str, bool):
        return _AS_IS
    raise TypeError(f"no JSON form for {kind!r}")


def _AS_IS(value: Any) -> Any:
    return value


def _plain_init(kind: type) -> bool:
    """Whether `kind`'s __init__ only stores its fields: a dataclass with every field in __init__,
    no __post_init__ and no slots."""
    return (not hasattr(kind, "__post_init__") and not hasattr(kind, "__slots__")
            and all(f.init for f in fields(kind)))  # fmt: skip
