"""Parsing and validation of what staff type: entry kinds, values with units, days, times and flags.

Input is forgiving (units, case, relative days), storage is strict (temperatures in C to 2 dp,
hCG and LH in IU/L). Every refusal raises `InputError` with one line that names what was wrong
and what is accepted.
"""

from __future__ import annotations

import re
import unicodedata
from dataclasses import dataclass
from datetime import date, timedelta

from caseload.core.figo import age_on
from caseload.core.model import (
    DISTURBANCE_FLAGS,
    MIDCYCLE_FLAG,
    MUCUS_SCALE,
    Flow,
    Kind,
    Scan,
    Value,
)

TEMP_MIN_C = 34.0
TEMP_MAX_C = 42.0
TEXT_MAX = 500
ID_PATTERN = re.compile(r"^[A-Za-z0-9][A-Za-z0-9_.-]{0,31}$")
EARLIEST_DAY = date(1900, 1, 1)
# The ages at which a patient is registered, from the earliest menarche to well past the menopause
# (common practice): a date of birth outside them is a mistyped year, not a caller.
AGE_MIN = 12
AGE_MAX = 60

POSITIVE_WORDS = {"positive": "positive", "pos": "positive", "+": "positive"}
NEGATIVE_WORDS = {"negative": "negative", "neg": "negative", "-": "negative"}
_NUMBER = r"(\d+(?:\.\d+)?)"
_TEMP = re.compile(rf"^{_NUMBER}\s*°?\s*([cf])?$", re.IGNORECASE)
_IU = re.compile(rf"^{_NUMBER}\s*(iu/l|miu/ml)?$", re.IGNORECASE)
_TIME = re.compile(r"^([01]?\d|2[0-3]):([0-5]\d)$")
_ENDO = re.compile(rf"\b(?:endo|endometrium|e)\s*[:=]?\s*{_NUMBER}\s*(?:mm)?\s*$", re.IGNORECASE)

FLAGS_BY_KIND: dict[Kind, tuple[str, ...]] = {
    Kind.TEMP: DISTURBANCE_FLAGS,
    Kind.BLEED: (MIDCYCLE_FLAG,),
}


class InputError(ValueError):
    """A refused input. The message is one line, fit to show a clerk as it is."""


@dataclass(frozen=True)
class ParsedEntry:
    kind: Kind
    day: date
    value: Value
    raw: str
    time: str | None = None
    flags: tuple[str, ...] = ()
    note: str = ""


def accepted(words) -> str:
    return ", ".join(words)


# Characters that act on a terminal or hide in it instead of showing: controls (newline, escape),
# format characters (bidi overrides, zero-width), lone surrogates from undecodable bytes, private-use
# and unassigned code points, and line or paragraph separators. Spaces of every kind stay spaces.
INERT_CATEGORIES = frozenset({"Cc", "Cf", "Cs", "Co", "Cn", "Zl", "Zp"})


def one_line(text: str, limit: int | None = 60) -> str:
    """User text fit for one line of a message or a screen: characters that would act on the terminal
    are shown as escapes; letters of every script and every kind of space stay as they are. The one
    rule for all display (see caseload.presentation.safe_text); `limit` shortens long text."""
    # str.isprintable is false for every inert category (and for spaces other than ' '): text it
    # passes has nothing to escape, and most text does pass, checked in C.
    shown = text if text.isprintable() else "".join(
        ch.encode("unicode_escape").decode("ascii") if unicodedata.category(ch) in INERT_CATEGORIES
        else ch
        for ch in text
    )
    return shown if limit is None or len(shown) <= limit else shown[: limit - 1] + "…"


def parse_kind(word: str) -> Kind:
    try:
        return Kind(word.strip().lower())
    except ValueError:
        raise InputError(f"unknown kind '{one_line(word)}': use one of {accepted(k.value for k in Kind)}") from None


def parse_day(text: str, today: date) -> date:
    """ISO date, 'today', 'yesterday' or '-N' (N days ago). Future days are refused."""
    t = text.strip().lower()
    if t == "today":
        day = today
    elif t == "yesterday":
        day = today - timedelta(days=1)
    elif re.fullmatch(r"-\d{1,4}", t):
        day = today - timedelta(days=int(t[1:]))
    else:
        try:
            day = date.fromisoformat(t) if re.fullmatch(r"\d{4}-\d{2}-\d{2}", t) else None
        except ValueError:
            day = None
        if day is None:
            raise InputError(f"day '{one_line(text)}' not understood: use YYYY-MM-DD, today, yesterday or -N (days ago)")
    if day > today:
        raise InputError(f"day {day.isoformat()} is in the future: entries can be logged up to today ({today.isoformat()})")
    if day < EARLIEST_DAY:
        raise InputError(f"day {day.isoformat()} is too early: use a day from {EARLIEST_DAY.isoformat()} on")
    return day


def parse_time(text: str) -> str:
    m = _TIME.match(text.strip())
    if not m:
        raise InputError(f"time '{one_line(text)}' not understood: use HH:MM, 24-hour (for example 06:45)")
    return f"{int(m.group(1)):02d}:{m.group(2)}"


def parse_flags(items, kind: Kind) -> tuple[str, ...]:
    """Flags given as a list or a comma/semicolon separated string; only those valid for the kind."""
    if isinstance(items, str):
        items = re.split(r"[;,]", items)
    flags = [f.strip().lower() for f in items if f.strip()]
    allowed = FLAGS_BY_KIND.get(kind, ())
    for f in flags:
        if f not in allowed:
            if allowed:
                raise InputError(f"flag '{one_line(f)}' does not apply to {kind.value}: use {accepted(allowed)}")
            raise InputError(f"flag '{one_line(f)}' does not apply to {kind.value}: {kind.value} takes no flags")
    return tuple(dict.fromkeys(flags))


def parse_temperature(raw: str) -> float:
    """Degrees C to 2 dp from '36.72', '36.72C' or '98.1F'."""
    m = _TEMP.match(raw.strip())
    if not m:
        raise InputError(f"temperature '{one_line(raw)}' not understood: write 36.72, 36.72C or 98.1F")
    number, unit = float(m.group(1)), (m.group(2) or "").lower()
    if not unit and number >= 90:
        if TEMP_MIN_C <= (number - 32) * 5 / 9 <= TEMP_MAX_C:
            raise InputError(f"temperature {m.group(1)} looks like Fahrenheit: write {m.group(1)}F, or give degrees C")
        # Neither unit gives a body temperature (365 would be 185 C as Fahrenheit): offer no unit.
        raise InputError(f"temperature {m.group(1)} is no body temperature in C or F: check the reading")
    celsius = round((number - 32) * 5 / 9, 2) if unit == "f" else round(number, 2)
    if not TEMP_MIN_C <= celsius <= TEMP_MAX_C:
        raise InputError(
            f"temperature {celsius:.2f} C is outside {TEMP_MIN_C:.1f}-{TEMP_MAX_C:.1f} C: check the reading and its unit"
        )
    return celsius


def fahrenheit(celsius: float) -> float:
    return celsius * 9 / 5 + 32


def _test_result(raw: str, what: str, *, number_max: float) -> Value:
    t = raw.strip().lower()
    if t in POSITIVE_WORDS:
        return Value(word=POSITIVE_WORDS[t])
    if t in NEGATIVE_WORDS:
        return Value(word=NEGATIVE_WORDS[t])
    m = _IU.match(t)
    if m:
        level = float(m.group(1))
        if level > number_max:
            raise InputError(f"{what} {m.group(1)} IU/L is above {number_max:g}: check the value and its unit")
        return Value(number=level)  # 1 IU/L = 1 mIU/mL, so both units are the same number
    raise InputError(
        f"{what} '{one_line(raw)}' not understood: write positive, negative, or a level such as 153, 153 IU/L or 153 mIU/mL"
    )


def _word(raw: str, words: tuple[str, ...], what: str) -> Value:
    t = raw.strip().lower()
    if t not in words:
        raise InputError(f"{what} '{one_line(raw)}' not understood: use one of {accepted(words)}")
    return Value(word=t)


def parse_scan(raw: str) -> Scan:
    """Follicle diameters in mm, optionally followed by the endometrium: '18,16,12 endo 8.5'."""
    text = raw.strip().lower()
    endometrium = None
    m = _ENDO.search(text)
    if m:
        endometrium = float(m.group(1))
        text = text[: m.start()]
    text = re.sub(r"^\s*(follicles?|f)\s*[:=]?", "", text).replace("mm", " ").strip(" ;")
    tokens = [t for t in re.split(r"[\s,;]+", text) if t]
    if tokens == ["none"]:
        tokens = []
    try:
        follicles = tuple(sorted((float(t) for t in tokens), reverse=True))
    except ValueError:
        raise InputError(
            f"scan '{one_line(raw)}' not understood: list follicles in mm, then endo and the lining, e.g. 18,16,12 endo 8.5"
        ) from None
    if not follicles and endometrium is None:
        raise InputError("scan is empty: list follicles in mm (or none), optionally endo N, e.g. 18,16,12 endo 8.5")
    if any(not 1 <= f <= 40 for f in follicles):
        raise InputError("follicle sizes must be 1-40 mm: check the scan values")
    if endometrium is not None and not 1 <= endometrium <= 30:
        raise InputError(f"endometrium {endometrium:g} mm is outside 1-30 mm: check the scan values")
    return Scan(follicles, endometrium)


def parse_text(raw: str, kind: Kind) -> Value:
    text = raw.strip()
    if not text:
        raise InputError(f"{kind.value} needs a short text (what was taken, done or noticed)")
    if len(text) > TEXT_MAX:
        raise InputError(f"{kind.value} text is {len(text)} characters: keep it to {TEXT_MAX}")
    return Value(text=text)


def parse_value(kind: Kind, raw: str) -> Value:
    """The normalised value for a kind, or InputError."""
    if kind is Kind.TEMP:
        return Value(number=parse_temperature(raw))
    if kind is Kind.BLEED:
        return _word(raw, tuple(f.value for f in Flow), "bleed")
    if kind is Kind.MUCUS:
        return _word(raw, MUCUS_SCALE, "mucus")
    if kind is Kind.LH:
        return _test_result(raw, "LH", number_max=1000)
    if kind is Kind.HCG:
        return _test_result(raw, "hCG", number_max=1_000_000)
    if kind is Kind.SCAN:
        return Value(scan=parse_scan(raw))
    return parse_text(raw, kind)


def parse_entry(
    kind: str | Kind,
    raw: str,
    today: date,
    on: str = "today",
    at: str | None = None,
    flags=(),
    note: str = "",
) -> ParsedEntry:
    """Validate one entry completely; the caller writes nothing unless this returns."""
    k = kind if isinstance(kind, Kind) else parse_kind(kind)
    value = parse_value(k, raw)
    note = note.strip()
    if len(note) > TEXT_MAX:
        raise InputError(f"note is {len(note)} characters: keep it to {TEXT_MAX}")
    return ParsedEntry(
        kind=k,
        day=parse_day(on, today),
        value=value,
        raw=raw.strip(),
        time=parse_time(at) if at else None,
        flags=parse_flags(flags, k),
        note=note,
    )


def parse_id(text: str, what: str) -> str:
    t = text.strip()
    if not ID_PATTERN.match(t):
        raise InputError(f"{what} id '{one_line(text)}' not accepted: use 1-32 letters, digits, '.', '_' or '-'")
    return t


NAME_MAX = 100
# Zero-width non-joiner and joiner: between two letters they choose a letter's form in Indic,
# Persian and other scripts (and join emoji), so a real name may hold them; nowhere else.
JOINERS = frozenset("\u200c\u200d")
PASTED_BREAKS = frozenset("\t\n\r")  # pasted with a name, folded into spaces as every other space is


def _code(ch: str) -> str:
    return f"U+{ord(ch):04X}" + (f" {unicodedata.name(ch)}" if unicodedata.name(ch, "") else "")


def _shown(ch: str) -> bool:
    """A character that draws something: not a space, a control or a format character, nor one no
    terminal can show (a lone surrogate, private-use or unassigned)."""
    return not ch.isspace() and unicodedata.category(ch) not in INERT_CATEGORIES


def parse_name(text: str, what: str = "name") -> str:
    """A person's name as typed, its spaces folded into single spaces: at least one visible character,
    at most NAME_MAX, no control character, and no invisible one but a joiner between two letters."""
    for ch in text:
        if unicodedata.category(ch) == "Cc" and ch not in PASTED_BREAKS:
            raise InputError(f"{what} holds a control character ({_code(ch)}): type the name again without it")
    if not any(_shown(ch) for ch in text):
        raise InputError(f"{what} has no visible characters: type the name")
    for i, ch in enumerate(text):
        if ch.isspace() or _shown(ch):
            continue
        if ch in JOINERS and 0 < i < len(text) - 1 and _shown(text[i - 1]) and _shown(text[i + 1]):
            continue
        which = "an invisible character" if unicodedata.category(ch) == "Cf" else "a character no screen can show"
        raise InputError(f"{what} holds {which} ({_code(ch)}): type the name again without it")
    t = " ".join(text.split())
    if len(t) > NAME_MAX:
        raise InputError(f"{what} is {len(t)} characters long: at most {NAME_MAX} are accepted")
    return t


def parse_birth_date(text: str, today: date) -> date:
    """A registering patient's date of birth, giving an age from AGE_MIN to AGE_MAX on `today`."""
    try:
        born = date.fromisoformat(text.strip())
    except ValueError:
        raise InputError(f"date of birth '{one_line(text)}' not understood: use YYYY-MM-DD") from None
    if born >= today:
        raise InputError(f"date of birth {born.isoformat()} is not plausible: it must be before today")
    age = age_on(born, today)
    if not AGE_MIN <= age <= AGE_MAX:
        raise InputError(
            f"date of birth {born.isoformat()} is not plausible: it gives age {age} on {today.isoformat()},"
            f" and a patient must be {AGE_MIN} to {AGE_MAX}"
        )
    return born


def parse_choice(text: str, choices, what: str):
    """One value of a StrEnum (role, plan, status), with the accepted words in the refusal."""
    try:
        return choices(text.strip().lower())
    except ValueError:
        raise InputError(f"{what} '{one_line(text)}' not accepted: use one of {accepted(c.value for c in choices)}") from None
