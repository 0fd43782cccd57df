"""The clinic's protocol file: TOML text checked setting by setting into a `Protocol`.

Layout: flat `name = value` lines, one per setting to override; everything left out keeps its
default. Every refusal is one line naming the file, the setting, the value and what is accepted.
"""

from __future__ import annotations

import json
import tomllib
from dataclasses import dataclass, replace

from caseload.core.parse import InputError, one_line
from caseload.core.settings import CALLER_MESSAGE_MAX, DEFAULT_PROTOCOL, SETTINGS, Protocol

LAYOUT = "flat 'name = value' lines, one per setting to override (e.g. fever_c = 38.0); '#' starts a comment"
# (lower, upper): settings that must not cross, or a rule could never fire or fires for everyone.
ORDERED = (
    ("window_approaching_p", "window_open_p"),
    ("figo_frequent_below", "figo_infrequent_above"),
    ("hcg_pair_min_hours", "hcg_pair_max_hours"),
    ("mature_follicle_mm", "trigger_follicle_mm"),
    ("shift_level_rise_c", "shift_quick_rise_c"),
    ("prior_cycle_within_sd", "prior_cycle_sd"),
    ("prior_luteal_within_sd", "prior_luteal_sd"),
)
FIELDS = {f.name: f for f in SETTINGS}


@dataclass(frozen=True)
class SettingRow:
    """One setting as `protocol show` lists it."""

    name: str
    value: float | int | str
    default: float | int | str
    lo: float | None
    hi: float | None
    source: str
    doc: str

    @property
    def overridden(self) -> bool:
        return self.value != self.default

    @property
    def accepted(self) -> str:
        return "text" if self.lo is None else f"{self.lo:g}-{self.hi:g}"


def value_text(value: float | int | str, limit: int | None = None) -> str:
    """A setting's value as `protocol show` and `protocol check` print it: numbers short, words quoted
    (cut to `limit` characters in a table column)."""
    return f'"{one_line(value, limit)}"' if isinstance(value, str) else f"{value:g}"


def _shown(value) -> str:
    if isinstance(value, str):
        return '"' + one_line(value) + '"'
    if isinstance(value, dict):
        return "{...}"
    return one_line(str(value).lower() if isinstance(value, bool) else str(value))


def _checked_words(name: str, key: str, value) -> str:
    """A setting that is words a person reads out: one line of printable text, not empty, not too long."""
    accepted = f"one line of text of up to {CALLER_MESSAGE_MAX} characters"
    if not isinstance(value, str):
        raise InputError(f"{name}: {key} = {_shown(value)} is not text: use {accepted} in quotes")
    words = " ".join(value.split())
    if not words or len(words) > CALLER_MESSAGE_MAX or one_line(words, None) != words:
        raise InputError(f"{name}: {key} = {_shown(value)} is not {accepted} (no control characters)")
    return words


def _checked(name: str, key: str, value) -> float | int | str:
    field = FIELDS[key]
    if isinstance(field.default, str):
        return _checked_words(name, key, value)
    lo, hi = field.metadata["lo"], field.metadata["hi"]
    accepted = f"{lo:g}-{hi:g}"
    whole = isinstance(field.default, int)
    if isinstance(value, bool) or not isinstance(value, int | float):
        kind = "whole number" if whole else "number"
        raise InputError(f"{name}: {key} = {_shown(value)} is not a {kind}: use a {kind} in {accepted}")
    if whole and not isinstance(value, int):
        raise InputError(f"{name}: {key} = {_shown(value)} is not a whole number: use a whole number in {accepted}")
    if not lo <= value <= hi:
        raise InputError(f"{name}: {key} = {_shown(value)} is outside {accepted}")
    return value if whole else float(value)


def parse_protocol(text: str, name: str) -> Protocol:
    """The protocol a file's text sets, or InputError with one line; `name` prefixes the message."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as err:
        raise InputError(f"{name}: not valid TOML ({one_line(str(err))}): write {LAYOUT}") from None
    for key, value in data.items():
        if isinstance(value, dict):
            raise InputError(f"{name}: [{one_line(key)}] is a table: write {LAYOUT}")
    return protocol_from_values(data, name)


def protocol_from_values(data: dict, name: str) -> Protocol:
    """The protocol that overrides `data` (setting name -> value) set, checked as a file is."""
    values = {}
    for key, value in data.items():
        if key not in FIELDS:
            known = ", ".join(sorted(FIELDS))
            raise InputError(f"{name}: unknown setting '{one_line(key)}': known settings are {known}")
        values[key] = _checked(name, key, value)
    protocol = replace(DEFAULT_PROTOCOL, **values)
    for lower, upper in ORDERED:
        if getattr(protocol, lower) > getattr(protocol, upper):
            raise InputError(
                f"{name}: {lower} = {getattr(protocol, lower):g} is above {upper} = {getattr(protocol, upper):g}: "
                f"{lower} must not be above {upper}"
            )
    return protocol


def setting_rows(protocol: Protocol) -> list[SettingRow]:
    """Every setting in declaration order, with the value in use, its default and its source."""
    return [
        SettingRow(f.name, getattr(protocol, f.name), f.default, f.metadata["lo"], f.metadata["hi"],
                   f.metadata["source"], f.metadata["doc"])
        for f in SETTINGS
    ]  # fmt: skip


def overrides_of(protocol: Protocol) -> dict[str, float | int | str]:
    """The settings that differ from the defaults, by name: what a protocol file writes."""
    return {r.name: r.value for r in setting_rows(protocol) if r.overridden}


def protocol_text(protocol: Protocol, header: str) -> str:
    """The protocol as a file `parse_protocol` reads back: a comment, then one line per override."""
    # The whole header, however long (who set the version and when): it is a comment, not a screen
    # line, so nothing needs shortening; one_line only keeps it on its line.
    lines = [f"# {one_line(header, limit=None)}"]
    # A JSON string (letters kept as they are) is a TOML basic string: quotes and backslashes escaped.
    lines += [f"{name} = {json.dumps(value, ensure_ascii=False) if isinstance(value, str) else repr(value)}"
              for name, value in overrides_of(protocol).items()]
    return "\n".join(lines) + "\n"
