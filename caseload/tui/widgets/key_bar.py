"""The line at the foot of every screen: the keys that work where the cursor is, each with its word.

One widget draws the whole line and is redrawn (never laid out again) when the screen's keys change,
which happens at every move between fields; a key that does not fit is left out whole, never cut,
and the help (`?`) lists every key."""

from __future__ import annotations

from dataclasses import dataclass
from itertools import groupby

from rich.text import Text
from textual import events
from textual.binding import Binding
from textual.screen import Screen
from textual.widget import Widget


@dataclass(frozen=True)
class KeyItem:
    """One item of the line: a key and its word, or a group's keys drawn together before its word."""

    keys: tuple[tuple[str, str], ...]  # (the key as pressed, the key as shown)
    words: str
    enabled: bool

    @property
    def text(self) -> str:
        return f"{''.join(shown for _, shown in self.keys)} {self.words}"


def key_items(bindings: list[tuple[Binding, bool, str]], shown_as) -> list[KeyItem]:
    """The screen's shown bindings as items, in the screen's order: one per action (its first key),
    and consecutive actions of one group as a single item with the group's word."""
    first_of_action: dict[str, tuple[Binding, bool]] = {}
    for binding, enabled, _tooltip in bindings:
        if binding.show:
            first_of_action.setdefault(binding.action, (binding, enabled))
    items = []
    for group, members in groupby(first_of_action.values(), lambda member: member[0].group):
        members = list(members)
        if group is not None and len(members) > 1:
            keys = tuple((b.key, shown_as(b)) for b, _ in members)
            items.append(KeyItem(keys, group.description, any(enabled for _, enabled in members)))
        else:
            items.extend(KeyItem(((b.key, shown_as(b)),), b.description, enabled) for b, enabled in members)
    return items


def fitted(items: list[KeyItem], width: int) -> list[KeyItem]:
    """The items that fit whole in `width` columns, one space apart, in order; the first that does
    not fit ends the line."""
    kept, used = [], 0
    for item in items:
        needed = len(item.text) + (1 if kept else 0)
        if used + needed > width:
            break
        kept.append(item)
        used += needed
    return kept


class KeyBar(Widget):
    ALLOW_SELECT = False  # a drag across the keys selects nothing
    DEFAULT_CSS = """
    KeyBar {
        dock: bottom;
        height: 1;
        background: $footer-background;
        color: $footer-description-foreground;
    }
    KeyBar > .key-bar--key {
        color: $footer-key-foreground;
        text-style: bold;
    }
    KeyBar > .key-bar--off {
        text-style: dim;
    }
    """
    COMPONENT_CLASSES = {"key-bar--key", "key-bar--off"}

    def __init__(self) -> None:
        super().__init__()
        self.items: list[KeyItem] = []
        self._spans: list[tuple[int, int, str, bool]] = []  # columns drawn, key pressed, enabled: for a click

    def on_mount(self) -> None:
        self.screen.bindings_updated_signal.subscribe(self, self._keys_changed)
        self.call_after_refresh(self._keys_changed, self.screen)  # once the screen's widgets are mounted

    def on_unmount(self) -> None:
        self.screen.bindings_updated_signal.unsubscribe(self)

    def _keys_changed(self, screen: Screen) -> None:
        if screen is not self.screen:
            return
        shown = [(b, enabled, tooltip) for _node, b, enabled, tooltip in screen.active_bindings.values()]
        items = key_items(shown, self.app.get_key_display)
        if items != self.items:
            self.items = items
            self.refresh()

    @property
    def drawn(self) -> list[KeyItem]:
        """The items drawn at the line's present width."""
        return fitted(self.items, self.size.width)

    def render(self) -> Text:
        key_style = self.get_component_rich_style("key-bar--key", partial=True)
        off_style = self.get_component_rich_style("key-bar--off", partial=True)
        line, spans = Text(no_wrap=True, overflow="crop"), []
        for item in self.drawn:
            if line:
                line.append(" ")
            start = len(line)
            for key, shown in item.keys:
                spans.append((len(line), len(line) + len(shown), key, item.enabled))
                line.append(shown, key_style)
            line.append(f" {item.words}")
            if len(item.keys) == 1:  # a lone key's word is part of it; a group's word names several keys
                spans[-1] = (start, len(line), item.keys[0][0], item.enabled)
            if not item.enabled:
                line.stylize(off_style, start)
        self._spans = spans
        return line

    def on_click(self, event: events.Click) -> None:
        """A click on a key or its word presses the key (a key that does nothing here rings the bell)."""
        for start, end, key, enabled in self._spans:
            if start <= event.x < end:
                if enabled:
                    self.app.simulate_key(key)
                else:
                    self.app.bell()
                return
