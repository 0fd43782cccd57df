"""CSV import of entries: every row is validated before any is written; all rows or none.

A row identical to a current entry of the store or to an earlier row of the file (same patient,
day, kind, value and time) is skipped and counted, so importing a file twice logs nothing twice.
A row that repeats one on purpose says so in the optional `correction` column (yes).
"""

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
from caseload.application.input_file import read_named_file
from caseload.application.patients import get_patient

REQUIRED = ("patient", "day", "kind", "value")
OPTIONAL = ("time", "flags", "note", "correction")
CORRECTION_WORDS = {"": False, "no": False, "n": False, "0": False, "yes": True, "y": True, "1": True}
# About 600,000 rows of readings (a 2,000-patient clinic's ten months of daily temperatures). Every
# row is checked and held before any is written (all rows or none), at about 0.8 KB of memory each:
# some 0.5 GB at the limit. A longer history is imported as several files.
MAX_BYTES = 20 * 1024 * 1024
MAX_FIELD = 2000


@dataclass(frozen=True)
class Imported:
    rows: int
    patients: int
    skipped: int = 0  # rows identical to an entry already logged


@dataclass(frozen=True)
class ParsedFile:
    rows: list[tuple[str, ParsedEntry]]
    skipped: int


def _key(patient_id: str, day, kind: Kind, value, time: str | None) -> tuple:
    """What makes two entries the same observation logged twice."""
    return (patient_id, day, kind, value, time)


class _Logged:
    """The keys of entries already logged: the store's current entries, read once a patient,
    and the rows of the file taken so far."""

    def __init__(self, ctx: Context):
        self.ctx = ctx
        self.keys: set[tuple] = set()
        self.read: set[str] = set()

    def take(self, patient_id: str, parsed: ParsedEntry) -> bool:
        """Record the row; False when it repeats an entry already logged."""
        if patient_id not in self.read:
            self.read.add(patient_id)
            self.keys.update(_key(patient_id, e.day, e.kind, e.value, e.time)
                             for e in self.ctx.store.entries.for_patient(patient_id) if e.current)
        key = _key(patient_id, parsed.day, parsed.kind, parsed.value, parsed.time)
        if key in self.keys:
            return False
        self.keys.add(key)
        return True


def _correction(cell: str) -> bool:
    word = cell.strip().lower()
    if word not in CORRECTION_WORDS:
        raise InputError(f"correction '{one_line(cell)}' not understood: use yes or no (blank means no)")
    return CORRECTION_WORDS[word]


def read_csv_file(path: str) -> bytes:
    """The file `caseload import` names, read for whoever runs it (within MAX_BYTES)."""
    return read_named_file(path, MAX_BYTES, "a UTF-8 CSV file")


def _decode(data: bytes) -> str:
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
        # The line itself is not shown: the file may be anything at all, and nothing of it is echoed.
        raise InputError(
            f"line 1: the file's first line is not a header this import accepts: it names the columns "
            f"{','.join(REQUIRED)} and optionally {','.join(OPTIONAL)}, each once"
        )
    return header


def parse_rows(ctx: Context, data: bytes) -> ParsedFile:
    """(patient id, parsed entry) for every row to log, and how many repeated entries were skipped;
    or InputError naming the first bad line."""
    reader = csv.reader(io.StringIO(_decode(data), newline=""))
    header = _header(reader)
    rows: list[tuple[str, ParsedEntry]] = []
    temps_seen: set[tuple[str, str]] = set()
    logged = _Logged(ctx)
    skipped = 0
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
            correction = _correction(cells.get("correction", ""))
            if not logged.take(patient.id, parsed) and not correction:
                skipped += 1
                continue
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
    if not rows and not skipped:
        raise InputError("the file has a header but no rows: nothing to import")
    return ParsedFile(rows, skipped)


def _recheck(ctx: Context, patient_id: str, parsed: ParsedEntry) -> None:
    """The store rules again, inside the write: another terminal may have logged since the file was read."""
    try:
        check_loggable(ctx, get_patient(ctx, patient_id), parsed)
    except Refused as err:
        raise Refused(f"{err} (logged from another terminal during the import): nothing imported") from None


def import_csv(ctx: Context, data: bytes) -> Imported:
    ctx.require("entry.import")
    parsed_file = parse_rows(ctx, data)
    rows = parsed_file.rows
    with ctx.store.atomic(ctx.today):
        touched: dict[str, None] = {}
        for patient_id, parsed in rows:
            _recheck(ctx, patient_id, parsed)
            ctx.store.entries.add(ctx.actor, patient_id, parsed)
            touched[patient_id] = None
        for patient_id in touched:
            refresh_patient(ctx, ctx.store.patients.get(patient_id))
        return Imported(len(rows), len(touched), parsed_file.skipped)
