"""The keys of the screen under it, in words: opened with `?` (or F1) on every screen and dialog.

Built from the bindings active where it was opened, so it lists exactly the keys that work there,
with the footer's words and a sentence for each (`key_help.SENTENCES`).
"""

from __future__ import annotations

from dataclasses import dataclass

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Label, Static

from caseload.tui.key_help import SCREEN_NAMES, SENTENCES
from caseload.tui.widgets.key_bar import KeyBar


@dataclass(frozen=True)
class KeyLine:
    keys: str
    words: str
    sentence: str


def key_lines(app) -> tuple[KeyLine, ...]:
    """The enabled bindings of the screen in front, one line per binding id (a binding with two keys
    is one line), the focused widget's first, then the screen's, then the app's."""
    keys: dict[str, list[str]] = {}
    first: dict[str, Binding] = {}
    for active in app.active_bindings.values():
        binding = active.binding
        if not binding.id or not active.enabled:
            continue  # Textual's own keys (cursor, editing) carry no id and need no telling
        keys.setdefault(binding.id, []).append(app.get_key_display(binding))
        first.setdefault(binding.id, binding)
    return tuple(KeyLine(" / ".join(dict.fromkeys(keys[i])), b.description, SENTENCES.get(i, b.description))
                 for i, b in first.items())


def screen_name(screen) -> str:
    """What the help's heading calls the screen it was opened over."""
    if type(screen).__name__ in SCREEN_NAMES:
        return SCREEN_NAMES[type(screen).__name__]
    titles = screen.query(".dialog-title")
    return f"'{titles.first().render()}'" if titles else "this screen"


def key_words(line: KeyLine) -> Text:
    """The footer's words, then the sentence (when it says more)."""
    text = Text(line.words, style="bold")
    return text.append(f": {line.sentence}") if line.sentence != line.words else text


class HelpScreen(ModalScreen[None]):
    """Esc, `?` or F1 closes it."""

    CSS_PATH = "dialogs.tcss"
    BINDINGS = [Binding("escape,question_mark,f1", "dismiss", "Close help", id="help.close")]

    def __init__(self, where: str, lines: tuple[KeyLine, ...]) -> None:
        super().__init__()
        self.where = where
        self.lines = lines

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="help"):
            yield Label(f"Keys on {self.where}", classes="dialog-title")
            with VerticalScroll(id="help-keys"):
                for line in self.lines:
                    with Horizontal(classes="help-line"):
                        yield Label(line.keys, classes="help-key")
                        yield Static(key_words(line), classes="help-words")
                yield Static(Text("Arrow keys move in lists and tables; Tab moves between fields; "
                                  "Enter in a field moves on or saves.", style="dim"))
        yield KeyBar()
