"""FIGO 2018 (Munro 2018) classification of the bleeding pattern: frequency, regularity, duration.

Each is "unknown" while there are fewer than `min_cycles_classify` complete cycles, rather than a guess.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from caseload.core.settings import Protocol
from caseload.core.stats import CycleStats

UNKNOWN = "unknown"


@dataclass(frozen=True)
class Classification:
    frequency: str  # absent / frequent / normal / infrequent / unknown
    regularity: str  # regular / irregular / unknown
    duration: str  # normal / prolonged / unknown
    age_years: int
    variation_limit: int  # normal shortest-to-longest variation at this age (days)


def age_on(born: date, today: date) -> int:
    """Completed years of age on `today`."""
    return today.year - born.year - ((today.month, today.day) < (born.month, born.day))


def variation_limit(age: int, protocol: Protocol) -> int:
    """FIGO's age bands: 7 days at 26-41, 9 days at 18-25 and 42-45.

    Outside the bands (under 18, over 45) the wider limit applies: cycles vary more near menarche
    and near the menopause, so the narrow mid-life limit would call normal variation irregular.
    """
    return protocol.figo_variation_mid if 26 <= age <= 41 else protocol.figo_variation_young_old


def classify(
    stats: CycleStats, days_without_bleed: int | None, pregnant: bool, age: int, protocol: Protocol
) -> Classification:
    """Classify from the window statistics; `days_without_bleed` counts from the last bleeding day."""
    limit = variation_limit(age, protocol)
    absent = (
        not pregnant and days_without_bleed is not None and days_without_bleed >= protocol.amenorrhoea_days
    )
    if stats.count < protocol.min_cycles_classify:
        return Classification("absent" if absent else UNKNOWN, UNKNOWN, UNKNOWN, age, limit)
    return Classification(
        frequency="absent" if absent else _frequency(stats.median, protocol),
        regularity="regular" if stats.variation <= limit else "irregular",
        duration="prolonged" if stats.bleed_median > protocol.figo_prolonged_bleed_above else "normal",
        age_years=age,
        variation_limit=limit,
    )


def _frequency(median: float, protocol: Protocol) -> str:
    # The median keeps one odd cycle from moving a patient's category; regularity reports the spread.
    if median < protocol.figo_frequent_below:
        return "frequent"
    if median > protocol.figo_infrequent_above:
        return "infrequent"
    return "normal"
