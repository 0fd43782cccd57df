"""CSV import of entries: every row is validated before any is written; all rows or none."""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass

from caseload.core.model import Kind
from caseload.core.parse import InputError, ParsedEntry, one_line, parse_entry, parse_id
from caseload.application.context import Context
from caseload.application.recompute import refresh_patient
from caseload.application.entries import check_loggable
from caseload.application.errors import Refused
from caseload.application.patients import get_patient

REQUIRED = ("patient", "day", "kind", "value")
OPTIONAL = ("time", "flags", "note")
MAX_BYTES = 20 * 1024 * 1024
MAX_FIELD = 2000


@dataclass(frozen=True)
class Imported:
    rows: int
    patients: int


def _decode(data: bytes) -> str:
    if len(data) > MAX_BYTES:
        raise InputError(f"file is {len(data)} bytes: import at most {MAX_BYTES // (1024 * 1024)} MB at a time")
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as err:
        line = data[: err.start].count(b"\n") + 1
        raise InputError(f"line {line}: the file is not UTF-8 text: save it as UTF-8 CSV") from None
    if "\x00" in text:
        raise InputError(f"line {text[:text.index(chr(0))].count(chr(10)) + 1}: the file holds a NUL byte: it is not CSV text")
    return text


def _header(reader) -> list[str]:
    try:
        header = [h.strip().lower() for h in next(reader)]
    except StopIteration:
        raise InputError("line 1: the file is empty: it needs a header row patient,day,kind,value") from None
    except csv.Error as err:
        raise InputError(f"line 1: not valid CSV ({err})") from None
    missing = [c for c in REQUIRED if c not in header]
    unknown = [c for c in header if c not in REQUIRED + OPTIONAL]
    if missing or unknown or len(set(header)) != len(header):
        raise InputError(
            f"line 1: header {one_line(','.join(header))} not accepted: columns are patient,day,kind,value"
            f" and optionally {','.join(OPTIONAL)}, each once"
        )
    return header


def parse_rows(ctx: Context, data: bytes) -> list[tuple[str, ParsedEntry]]:
    """(patient id, parsed entry) for every row, or InputError naming the first bad line."""
    reader = csv.reader(io.StringIO(_decode(data), newline=""))
    header = _header(reader)
    rows: list[tuple[str, ParsedEntry]] = []
    temps_seen: set[tuple[str, str]] = set()
    line = 1
    try:
        for record in reader:
            line = reader.line_num
            if not any(c.strip() for c in record):
                continue
            if len(record) != len(header):
                raise InputError(f"has {len(record)} fields, the header has {len(header)}")
            if any(len(c) > MAX_FIELD for c in record):
                raise InputError(f"a field is longer than {MAX_FIELD} characters")
            cells = dict(zip(header, record))
            patient = get_patient(ctx, parse_id(cells["patient"], "patient"))
            parsed = parse_entry(
                cells["kind"],
                cells["value"],
                ctx.today,
                on=cells["day"],
                at=cells.get("time") or None,
                flags=cells.get("flags", ""),
                note=cells.get("note", ""),
            )
            if parsed.kind is Kind.TEMP:
                key = (patient.id, parsed.day.isoformat())
                if key in temps_seen:
                    raise InputError(f"a second temperature for {patient.id} on {key[1]} in the same file")
                temps_seen.add(key)
            check_loggable(ctx, patient, parsed)
            rows.append((patient.id, parsed))
    except (InputError, Refused) as err:
        raise InputError(f"line {line}: {err}") from None
    except csv.Error as err:
        raise InputError(f"line {reader.line_num}: not valid CSV ({err})") from None
    if not rows:
        raise InputError("the file has a header but no rows: nothing to import")
    return rows


def _recheck(ctx: Context, patient_id: str, parsed: ParsedEntry) -> None:
    """The store rules again, inside the write: another terminal may have logged since the file was read."""
    try:
        check_loggable(ctx, get_patient(ctx, patient_id), parsed)
    except Refused as err:
        raise Refused(f"{err} (logged from another terminal during the import): nothing imported") from None


def import_csv(ctx: Context, data: bytes) -> Imported:
    ctx.require("entry.import")
    rows = parse_rows(ctx, data)
    with ctx.store.atomic(ctx.today):
        touched: dict[str, None] = {}
        for patient_id, parsed in rows:
            _recheck(ctx, patient_id, parsed)
            ctx.store.entries.add(ctx.actor, patient_id, parsed)
            touched[patient_id] = None
        for patient_id in touched:
            refresh_patient(ctx, ctx.store.patients.get(patient_id))
        return Imported(len(rows), len(touched))
