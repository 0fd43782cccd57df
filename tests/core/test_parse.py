"""Entry parsing: units, relative days, flags and every refusal."""

from __future__ import annotations

from datetime import date

import pytest
from hypothesis import given, strategies as st

from caseload.core.model import Kind
from caseload.core.parse import (
    InputError,
    fahrenheit,
    parse_day,
    parse_entry,
    parse_flags,
    parse_kind,
    parse_temperature,
    parse_value,
)

TODAY = date(2026, 12, 1)


@pytest.mark.parametrize(
    "raw, celsius",
    [
        ("36.72", 36.72),
        ("36.72C", 36.72),
        ("36.72 c", 36.72),
        ("36.7°C", 36.70),
        # 98.1 F = (98.1 - 32) * 5/9 = 36.722 C: the conversion formula is common practice
        ("98.1F", 36.72),
        ("97.7 F", 36.50),
        ("34.0", 34.0),
        ("42.0", 42.0),
    ],
)
def test_temperatures_are_stored_in_celsius(raw, celsius):
    assert parse_temperature(raw) == celsius


@pytest.mark.parametrize(
    "raw, fragment",
    [
        ("33.99", "outside 34.0-42.0 C"),
        ("42.01", "outside 34.0-42.0 C"),
        ("110F", "outside 34.0-42.0 C"),
        ("98.1", "looks like Fahrenheit"),  # 98.1 F is 36.72 C (F = C x 9/5 + 32)
        ("365", "no body temperature in C or F"),  # as F it would be 185 C: no unit is offered
        ("3650", "no body temperature in C or F"),
        ("36,72", "not understood"),
        ("warm", "not understood"),
        ("", "not understood"),
    ],
)
def test_bad_temperatures_are_refused_with_reason(raw, fragment):
    with pytest.raises(InputError, match=fragment):
        parse_temperature(raw)


@given(st.floats(min_value=34.0, max_value=42.0))
def test_celsius_fahrenheit_round_trip(c):
    c = round(c, 2)
    assert abs(parse_temperature(f"{fahrenheit(c):.2f}F") - c) <= 0.01


@pytest.mark.parametrize(
    "text, expected",
    [
        ("today", date(2026, 12, 1)),
        ("yesterday", date(2026, 11, 30)),
        ("-2", date(2026, 11, 29)),
        ("-31", date(2026, 10, 31)),
        ("2026-02-28", date(2026, 2, 28)),
        (" Today ", date(2026, 12, 1)),
    ],
)
def test_days(text, expected):
    assert parse_day(text, TODAY) == expected


@pytest.mark.parametrize(
    "text, fragment",
    [("2026-12-02", "in the future"), ("tomorrow", "not understood"), ("2026-02-30", "not understood"), ("+1", "not understood")],
)
def test_bad_days(text, fragment):
    with pytest.raises(InputError, match=fragment):
        parse_day(text, TODAY)


@pytest.mark.parametrize(
    "kind, raw, field, expected",
    [
        (Kind.BLEED, "Heavy", "word", "heavy"),
        (Kind.BLEED, "spotting", "word", "spotting"),
        (Kind.LH, "positive", "word", "positive"),
        (Kind.LH, "neg", "word", "negative"),
        (Kind.LH, "40 IU/L", "number", 40.0),
        (Kind.MUCUS, "stretchy", "word", "stretchy"),
        (Kind.HCG, "positive", "word", "positive"),
        (Kind.HCG, "153", "number", 153.0),
        (Kind.HCG, "153 IU/L", "number", 153.0),
        # 1 IU/L = 1 mIU/mL (unit identity, common practice)
        (Kind.HCG, "153 mIU/mL", "number", 153.0),
        (Kind.MED, "letrozole 2.5 mg", "text", "letrozole 2.5 mg"),
    ],
)
def test_values(kind, raw, field, expected):
    assert getattr(parse_value(kind, raw), field) == expected


def test_scan_lists_follicles_largest_first_with_endometrium():
    scan = parse_value(Kind.SCAN, "12, 18,16 endo 8.5").scan
    assert scan.follicles_mm == (18.0, 16.0, 12.0)
    assert scan.endometrium_mm == 8.5


@pytest.mark.parametrize(
    "kind, raw, fragment",
    [
        (Kind.BLEED, "medium", "use one of spotting, light, moderate, heavy"),
        (Kind.MUCUS, "wet", "use one of dry, damp, sticky, creamy, watery, stretchy"),
        (Kind.HCG, "maybe", "write positive, negative, or a level"),
        (Kind.SCAN, "big", "list follicles in mm"),
        (Kind.SCAN, "45 endo 8", "1-40 mm"),
        (Kind.NOTE, "   ", "needs a short text"),
    ],
)
def test_bad_values_list_what_is_accepted(kind, raw, fragment):
    with pytest.raises(InputError, match=fragment):
        parse_value(kind, raw)


def test_unknown_kind_lists_the_kind_words():
    with pytest.raises(InputError) as err:
        parse_kind("temperature")
    assert "temp, lh, mucus, hcg, scan" in str(err.value)


def test_flags_belong_to_their_kind():
    assert parse_flags("illness, late", Kind.TEMP) == ("illness", "late")
    assert parse_flags(["midcycle"], Kind.BLEED) == ("midcycle",)
    with pytest.raises(InputError, match="does not apply to bleed"):
        parse_flags(["alcohol"], Kind.BLEED)
    with pytest.raises(InputError, match="takes no flags"):
        parse_flags(["late"], Kind.LH)


def test_entry_combines_day_time_and_flags():
    e = parse_entry("temp", "97.9F", TODAY, on="yesterday", at="6:45", flags=["poor-sleep"])
    assert (e.kind, e.day, e.time, e.flags, e.value.number) == (Kind.TEMP, date(2026, 11, 30), "06:45", ("poor-sleep",), 36.61)


@given(kind=st.sampled_from(list(Kind)), raw=st.text(max_size=40), on=st.text(max_size=12))
def test_any_text_is_parsed_or_refused_in_one_line(kind, raw, on):
    try:
        parse_entry(kind, raw, TODAY, on=on)
    except InputError as err:
        message = str(err)
        assert message and "\n" not in message and "\r" not in message
