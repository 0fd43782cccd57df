"""Choosing a nurse, a plan or a status by typing: the forms' one rule for what a typed word picks.

The form only helps: the Clinic's use case checks the value again and refuses as the CLI does.
"""

from __future__ import annotations

from enum import StrEnum
from typing import TypeVar

from caseload.core.model import Role, Staff
from caseload.core.parse import InputError, accepted, one_line, parse_choice
from caseload.tui.search import folded

E = TypeVar("E", bound=StrEnum)


def active_nurses(staff: list[Staff]) -> tuple[Staff, ...]:
    return tuple(s for s in staff if s.role is Role.NURSE and s.active)


def pick_nurse(nurses: tuple[Staff, ...], typed: str) -> Staff | None:
    """The nurse a typed id or name start means; None for a blank (no nurse yet)."""
    text = folded(typed.strip())
    if not text:
        return None
    exact = [n for n in nurses if folded(n.id) == text]
    fits = exact or [n for n in nurses if folded(n.id).startswith(text)
                     or any(word.startswith(text) for word in folded(n.name).split())
                     or folded(n.name).startswith(text)]
    if len(fits) == 1:
        return fits[0]
    ids = accepted(n.id for n in (fits or nurses))
    if fits:
        raise InputError(f"nurse '{one_line(typed)}' fits {ids}: type more of the id or name")
    raise InputError(f"no active nurse '{one_line(typed)}': type one of {ids or 'none'}, or leave it blank")


def pick_word(choices: type[E], typed: str, what: str) -> E:
    """A plan or status from its word or the start of it ('ovu' is ovulation-induction)."""
    fits = [c for c in choices if c.value.startswith(typed.strip().lower())] if typed.strip() else []
    return fits[0] if len(fits) == 1 else parse_choice(typed, choices, what)
