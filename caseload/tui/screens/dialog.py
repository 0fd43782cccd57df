"""The base of every dialog: a modal screen with the help key.

A modal screen does not pass keys to the app's bindings, so each dialog carries its own `?` (typed
as text in a field) and F1 (works everywhere), which open the help on the keys of that dialog.
"""

from __future__ import annotations

from typing import TypeVar

from textual.binding import Binding
from textual.screen import ModalScreen

Result = TypeVar("Result")


class Dialog(ModalScreen[Result]):
    BINDINGS = [Binding("question_mark,f1", "app.help", "Help", id="dialog.help")]
