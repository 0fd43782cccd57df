"""The base of every dialog: a modal screen with the help key.

A modal screen does not pass keys to the app's bindings, so each dialog carries its own `?` (typed
as text in a field) and F1 (works everywhere), which open the help on the keys of that dialog.
"""

from __future__ import annotations

from typing import TypeVar

from rich.text import Text
from textual.binding import Binding
from textual.screen import ModalScreen
from textual.widgets import Static

Result = TypeVar("Result")


class Dialog(ModalScreen[Result]):
    BINDINGS = [Binding("question_mark,f1", "app.help", "Help", id="dialog.help")]


def show_check(check: Static, problem: str | None, ready: str) -> None:
    """A form's check line: what is wrong, marked refused, or what Enter will do."""
    check.set_class(problem is not None, "refused")
    check.update(Text(problem or ready, no_wrap=False))
