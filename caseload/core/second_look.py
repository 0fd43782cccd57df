"""Entries that parse but deserve a second look before they are saved: an unusual basal temperature,
a reading typed with its decimal point missing or misplaced, a second entry of a once-a-day kind."""

from __future__ import annotations

import re

from caseload.core.model import Kind
from caseload.core.parse import ParsedEntry, TEMP_MAX_C, TEMP_MIN_C
from caseload.core.settings import Protocol

# One observation a day: the day's temperature, its most fertile mucus, its flow. LH, hCG and the
# rest can be tested or given more than once a day (common practice).
ONCE_A_DAY = frozenset({Kind.TEMP, Kind.MUCUS, Kind.BLEED})

_DIGITS = re.compile(r"^\s*(\d{1,2}\.?\d{1,3}|\d{3,4})\s*°?\s*[cf]?\s*$", re.IGNORECASE)


def unusual_reading(parsed: ParsedEntry, protocol: Protocol) -> str | None:
    """Why a temperature that parses is unusual for a basal reading, or None when it is not."""
    if parsed.kind is not Kind.TEMP or parsed.value.number is None:
        return None
    low, high = protocol.plausible_temp_low_c, protocol.plausible_temp_high_c
    if low <= parsed.value.number <= high:
        return None
    return f"{parsed.value.number:.2f} C is outside the usual basal range {low:.1f}-{high:.1f} C"


def meant_celsius(raw: str) -> float | None:
    """The temperature in C that `raw` probably meant when its point is missing or misplaced
    ('365' or '3.65' for 36.5, '3672' for 36.72), or None when it reads as typed or means nothing."""
    m = _DIGITS.match(raw)
    if not m:
        return None
    digits = m.group(1).replace(".", "")
    meant = round(int(digits) / 10 ** (len(digits) - 2), 2)
    if not TEMP_MIN_C <= meant <= TEMP_MAX_C or meant == float(m.group(1)):
        return None
    return meant


def once_a_day_twice(kind: Kind, already_that_day: int) -> str | None:
    """Why a further entry of `kind` on a day that has `already_that_day` of them needs a look, or None."""
    if kind not in ONCE_A_DAY or already_that_day == 0:
        return None
    return f"there is already a {kind.value} entry that day (one a day is usual)"
