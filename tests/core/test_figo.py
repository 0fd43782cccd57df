"""FIGO 2018 (Munro MG et al., Int J Gynecol Obstet 2018) classification boundaries."""

from datetime import date

import pytest

from caseload.core.figo import age_on, classify, variation_limit
from caseload.core.settings import DEFAULT_PROTOCOL as P
from caseload.core.stats import cycle_stats


def figo(lengths, bleeds=None, age=30, days_dry=5, pregnant=False):
    return classify(cycle_stats(lengths, bleeds or [5] * len(lengths)), days_dry, pregnant, age, P)


@pytest.mark.parametrize(
    "length, expected",
    # FIGO 2018: normal frequency 24 to 38 days; frequent below 24, infrequent above 38.
    [(23, "frequent"), (24, "normal"), (38, "normal"), (39, "infrequent")],
)
def test_frequency_boundaries(length, expected):
    assert figo([length] * 3).frequency == expected


@pytest.mark.parametrize(
    "age, variation, expected",
    # FIGO 2018 (age bands from memory): up to 7 days at 26-41, up to 9 at 18-25 and 42-45.
    [
        (30, 7, "regular"), (30, 8, "irregular"),
        (26, 7, "regular"), (26, 8, "irregular"),
        (41, 8, "irregular"),
        (25, 9, "regular"), (25, 10, "irregular"),
        (20, 9, "regular"), (42, 9, "regular"), (45, 10, "irregular"),
    ],
)
def test_regularity_by_age_band(age, variation, expected):
    assert figo([27, 28, 27 + variation], age=age).regularity == expected


def test_outside_the_bands_the_wider_limit_applies():
    # Documented choice: under 18 and over 45 use 9 days, as the adjacent FIGO bands.
    assert variation_limit(16, P) == 9 and variation_limit(48, P) == 9


@pytest.mark.parametrize("bleed, expected", [(8, "normal"), (9, "prolonged")])
def test_duration_boundary(bleed, expected):
    # FIGO 2018: normal duration of flow up to 8 days, prolonged beyond.
    assert figo([28] * 3, bleeds=[bleed] * 3).duration == expected


def test_too_few_cycles_are_unknown_not_a_guess():
    c = figo([28, 28])
    assert (c.frequency, c.regularity, c.duration) == ("unknown", "unknown", "unknown")


def test_ninety_days_without_bleeding_is_absent():
    # FIGO 2018: absent bleeding is a frequency category (90 days from memory).
    assert figo([28, 28], days_dry=90).frequency == "absent"
    assert figo([28] * 3, days_dry=89).frequency == "normal"
    assert figo([28] * 3, days_dry=120, pregnant=True).frequency == "normal"


def test_age_in_completed_years():
    assert age_on(date(1990, 6, 15), date(2020, 6, 14)) == 29
    assert age_on(date(1990, 6, 15), date(2020, 6, 15)) == 30
    assert age_on(date(2000, 2, 29), date(2021, 2, 28)) == 20
