"""The second-look rules: unusual basal temperatures, points missing or misplaced, once-a-day kinds."""

from __future__ import annotations

from datetime import date

from hypothesis import given, strategies as st

from caseload.core.model import Kind
from caseload.core.parse import parse_entry
from caseload.core.second_look import meant_celsius, once_a_day_twice, unusual_reading
from caseload.core.settings import DEFAULT_PROTOCOL, Protocol

DAY = date(2026, 12, 1)


def temp(raw: str):
    return parse_entry("temp", raw, DAY)


def test_band_edges_from_the_protocol():
    # Basal range 35.5-38.5 C by default (from memory); the edges themselves are usual.
    assert unusual_reading(temp("35.5"), DEFAULT_PROTOCOL) is None
    assert unusual_reading(temp("38.5"), DEFAULT_PROTOCOL) is None
    assert unusual_reading(temp("35.49"), DEFAULT_PROTOCOL) is not None
    assert unusual_reading(temp("38.51"), DEFAULT_PROTOCOL) is not None
    # 96.0 F is (96 - 32) x 5/9 = 35.56 C (NIST SP 811): inside.
    assert unusual_reading(temp("96.0F"), DEFAULT_PROTOCOL) is None
    assert unusual_reading(temp("38.4"), Protocol(plausible_temp_high_c=38.0)) is not None
    assert unusual_reading(parse_entry("lh", "pos", DAY), DEFAULT_PROTOCOL) is None


def test_points_missing_or_misplaced():
    assert meant_celsius("365") == 36.5
    assert meant_celsius("3.65") == 36.5
    assert meant_celsius("365F") == 36.5
    assert meant_celsius("3672") == 36.72
    assert meant_celsius("36.5") is None  # read as typed
    assert meant_celsius("98.1") is None  # 98.1 is no Celsius reading with a point moved
    assert meant_celsius("abc") is None


@given(st.integers(min_value=3500, max_value=3999))
def test_any_reading_typed_without_its_point_is_recovered(hundredths):
    assert meant_celsius(str(hundredths)) == hundredths / 100


def test_once_a_day_kinds():
    assert once_a_day_twice(Kind.MUCUS, 1) is not None
    assert once_a_day_twice(Kind.MUCUS, 0) is None
    assert once_a_day_twice(Kind.LH, 3) is None
