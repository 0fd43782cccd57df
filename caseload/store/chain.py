"""The audit chain: each audit row carries a SHA-256 over its own content and the previous row's hash.

Changing, removing or reordering any row breaks every hash after it. The formula is part of the
file format: stores written by any version must verify with it, so it never changes.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Iterable, Iterator, Sequence

GENESIS = "0" * 64  # the "previous hash" of the first audit row
# The columns a hash covers, in this order; the row's id is among them, so renumbering shows too.
COLUMNS = ("id", "at", "by_staff", "os_account", "action", "tbl", "row_id", "before", "after", "day_of_record")


def link(previous: str, row: Sequence) -> str:
    """The hash of one audit row (its COLUMNS values, in order) following the row hashed `previous`."""
    content = json.dumps(list(row), ensure_ascii=False, separators=(",", ":"))
    return hashlib.sha256(f"{previous}\n{content}".encode()).hexdigest()


def chained(previous: str, first_id: int, rows: Iterable[Sequence]) -> Iterator[tuple]:
    """Rows without id (the COLUMNS after it) as full rows: id, values, hash, linked from `previous`."""
    for row_id, values in enumerate(rows, start=first_id):
        full = (row_id, *values)
        previous = link(previous, full)
        yield (*full, previous)


def breaks(rows: Iterable[Sequence]) -> Iterator[int]:
    """Ids of the rows (COLUMNS values then the stored hash, in id order) whose hash does not follow."""
    previous = GENESIS
    for row in rows:
        expected = link(previous, row[:-1])
        if row[-1] != expected:
            yield row[0]
        # Go on from the stored hash: one altered row is reported once, not with every row after it.
        previous = row[-1] if row[-1] is not None else expected
