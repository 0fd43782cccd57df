"""Entry parsing: units, relative days, flags and every refusal."""

from __future__ import annotations

import unicodedata
from datetime import date

import pytest
from hypothesis import given, strategies as st

from caseload.core.model import Kind
from caseload.core.parse import (
    AGE_MAX,
    AGE_MIN,
    NAME_MAX,
    InputError,
    fahrenheit,
    parse_birth_date,
    parse_day,
    parse_entry,
    parse_flags,
    parse_kind,
    parse_name,
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


# --- dates of birth: a registering patient is 12 to 60 years old on the day (common practice)

CLINIC_DAY = date(2026, 12, 4)


def completed_years(born: date, day: date) -> int:
    """Age in completed years: a year is complete on the birthday (common practice); a birthday of
    29 February is complete on 1 March in a year without one."""
    years = day.year - born.year
    return years - 1 if (day.month, day.day) < (born.month, born.day) else years


@pytest.mark.parametrize(
    "born",
    ["2014-12-04", "1965-12-05", "1991-03-14", " 1991-03-14 "],  # 12 today; 60 (61 tomorrow); 35
)
def test_a_birth_date_giving_age_12_to_60_is_accepted_as_typed(born):
    assert parse_birth_date(born, CLINIC_DAY) == date.fromisoformat(born.strip())


def outside(born: str, age: int) -> str:
    return f"date of birth {born} is not plausible: it gives age {age} on 2026-12-04, and a patient must be 12 to 60"


@pytest.mark.parametrize(
    "born, message",
    [
        ("2026-12-03", outside("2026-12-03", 0)),  # the day before the clinic's day
        ("2014-12-05", outside("2014-12-05", 11)),  # 12 tomorrow
        ("1965-12-04", outside("1965-12-04", 61)),  # 61 today
        ("1901-01-01", outside("1901-01-01", 125)),
        ("2026-12-04", "date of birth 2026-12-04 is not plausible: it must be before today"),
        ("2027-01-01", "date of birth 2027-01-01 is not plausible: it must be before today"),
        ("1991-02-30", "date of birth '1991-02-30' not understood: use YYYY-MM-DD"),
    ],
)
def test_an_implausible_birth_date_is_refused_in_one_line(born, message):
    with pytest.raises(InputError) as refused:
        parse_birth_date(born, CLINIC_DAY)
    assert str(refused.value) == message


def test_a_birthday_on_29_february_completes_the_year_on_1_march_in_other_years():
    assert parse_birth_date("2012-02-29", date(2024, 2, 29)) == date(2012, 2, 29)  # 12 on her birthday
    with pytest.raises(InputError, match="gives age 11 on 2024-02-28"):
        parse_birth_date("2012-02-29", date(2024, 2, 28))
    assert parse_birth_date("1964-02-29", date(2025, 2, 28)) == date(1964, 2, 29)  # still 60
    with pytest.raises(InputError, match="gives age 61 on 2025-03-01"):
        parse_birth_date("1964-02-29", date(2025, 3, 1))


@given(st.dates(min_value=date(1850, 1, 1), max_value=date(2100, 12, 31)),
       st.dates(min_value=date(1950, 1, 1), max_value=date(2100, 12, 31)))
def test_a_birth_date_is_accepted_exactly_when_the_age_is_in_range(born, day):
    age_ok = born < day and AGE_MIN <= completed_years(born, day) <= AGE_MAX
    try:
        assert parse_birth_date(born.isoformat(), day) == born and age_ok
    except InputError as err:
        assert not age_ok and "\n" not in str(err) and str(err).startswith(f"date of birth {born.isoformat()}")


@given(st.text(max_size=20))
def test_any_typed_birth_date_is_parsed_or_refused_in_one_line(text):
    try:
        born = parse_birth_date(text, CLINIC_DAY)
    except InputError as err:
        assert str(err) and "\n" not in str(err) and "\r" not in str(err)
    else:
        assert AGE_MIN <= completed_years(born, CLINIC_DAY) <= AGE_MAX


# --- names: at least one visible character, no control character, no invisible one but a joiner
# between two letters; spaces of every kind fold into one

BLANK = "name has no visible characters: type the name"
ZWJ, ZWNJ = "\u200d", "\u200c"


def refusal(text: str) -> str:
    with pytest.raises(InputError) as refused:
        parse_name(text)
    return str(refused.value)


@pytest.mark.parametrize(
    "typed",
    ["", "   ", "\t\n", "\u00a0\u3000", "\u200b", "\u200b\u200b\u200b", " \ufeff \u2060 ", ZWJ, ZWNJ + ZWJ],
)
def test_a_name_with_nothing_visible_is_refused_as_blank(typed):
    assert refusal(typed) == BLANK


@pytest.mark.parametrize(
    "typed, code",
    [
        ("Pia\x1b[31mTest", "U+001B"),  # ESC: an ANSI colour sequence
        ("\x1b", "U+001B"),
        ("Pia\x00", "U+0000"),
        ("Pia\x7fTest", "U+007F"),  # DEL
        ("Pia\x85Test", "U+0085"),  # C1 next line
        ("Pia\x9b31mTest", "U+009B"),  # C1 control sequence introducer
        ("Pia\x1fTest", "U+001F"),  # a unit separator, which str.split would fold away as a space
        ("Pia\x0bTest", "U+000B"),
    ],
)
def test_a_control_character_is_refused_by_its_code(typed, code):
    assert refusal(typed) == f"name holds a control character ({code}): type the name again without it"


@pytest.mark.parametrize(
    "typed, named",
    [
        ("Pia\u200bTest", "U+200B ZERO WIDTH SPACE"),
        ("Pia \u202eTest", "U+202E RIGHT-TO-LEFT OVERRIDE"),  # would show the name reversed
        ("\ufeffPia Test", "U+FEFF ZERO WIDTH NO-BREAK SPACE"),
        (ZWJ + "Pia", "U+200D ZERO WIDTH JOINER"),  # a joiner joins nothing at the start
        ("Pia" + ZWJ, "U+200D ZERO WIDTH JOINER"),
        ("Pia " + ZWJ + " Test", "U+200D ZERO WIDTH JOINER"),
        ("Pia" + ZWJ + ZWJ + "Test", "U+200D ZERO WIDTH JOINER"),
    ],
)
def test_an_invisible_character_outside_a_word_is_refused_by_its_name(typed, named):
    assert refusal(typed) == f"name holds an invisible character ({named}): type the name again without it"


def test_a_character_no_screen_can_show_is_refused():
    assert refusal("Pia \ue000") == "name holds a character no screen can show (U+E000): type the name again without it"
    assert refusal("Pia\ud800") == "name holds a character no screen can show (U+D800): type the name again without it"


@pytest.mark.parametrize(
    "typed",
    [
        "\u0915\u094d" + ZWJ + "\u0937\u092e\u093e",  # Devanagari: the joiner asks for the half form of ka
        "\u0645\u0627\u0647" + ZWNJ + "\u0631\u062e",  # Persian: a half-space inside a compound name
        "\u0d15\u0d7b" + ZWJ + "\u0d28",  # Malayalam
    ],
)
def test_a_joiner_between_letters_is_kept_as_typed(typed):
    assert parse_name(typed) == typed


def test_spaces_of_every_kind_fold_into_one():
    assert parse_name("  Pia\t\u00a0Test\r\n") == "Pia Test"


def test_a_name_is_at_most_100_characters():
    assert parse_name("x" * NAME_MAX) == "x" * NAME_MAX
    assert refusal("x" * 101) == "name is 101 characters long: at most 100 are accepted"
    assert parse_name("  " + "x" * NAME_MAX + "  ") == "x" * NAME_MAX  # the spaces around it are not counted


def shown(ch: str) -> bool:
    return not ch.isspace() and unicodedata.category(ch) not in {"Cc", "Cf", "Cs", "Co", "Cn", "Zl", "Zp"}


# Any text, with the characters names go wrong with mixed in often.
NAME_TEXT = st.text(
    st.one_of(
        st.characters(),
        st.sampled_from(["\x1b", "\x00", "\x7f", "\x85", "\x9b", "\t", "\n", " ", "\u00a0", "\u200b", "\u200e",
                         "\u202e", "\ufeff", "\u2060", ZWJ, ZWNJ, "\u0915", "\u094d", "a", "Z", "-"]),
    ),
    max_size=120,
)


@given(NAME_TEXT)
def test_every_accepted_name_shows_something_and_holds_no_control(typed):
    try:
        name = parse_name(typed)
    except InputError as err:
        message = str(err)
        assert message.startswith("name ") and message.count(": ") >= 1
        assert message.isprintable()  # one line, nothing in it acts on a terminal
    else:
        assert any(shown(ch) for ch in name)
        assert not any(unicodedata.category(ch) == "Cc" for ch in name)
        for i, ch in enumerate(name):  # the only invisible characters are joiners between two shown ones
            if unicodedata.category(ch) == "Cf":
                assert ch in (ZWJ, ZWNJ) and 0 < i < len(name) - 1 and shown(name[i - 1]) and shown(name[i + 1])
        assert 1 <= len(name) <= NAME_MAX and name == name.strip() and "  " not in name
        assert name == " ".join(typed.split())  # nothing but the spaces was changed


@given(st.text(st.characters(categories=("L", "M", "N", "P", "S", "Zs")), max_size=NAME_MAX))
def test_a_name_of_letters_digits_punctuation_and_spaces_is_accepted(typed):
    if not any(shown(ch) for ch in typed):
        assert refusal(typed) == BLANK
    else:
        assert parse_name(typed) == " ".join(typed.split())
