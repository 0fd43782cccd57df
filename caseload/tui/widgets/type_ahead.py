"""A text field that keeps fast typing in order across Enter, Tab and its editing keys.

A clerk types "noor⏎t⏎36.72⏎" without waiting, and over SSH those keys can arrive together. A
plain Input submits on Enter only after the keys behind it have already been typed into it, so
they would land in the wrong field. This field submits at once on Enter, holds the keys that
follow, and hands them to whichever field the screen moves on to.
"""

from __future__ import annotations

from textual import events
from textual.widget import Widget
from textual.widgets import Input

TAB_KEYS = {"tab": "focus_next", "shift+tab": "focus_previous"}
KEY_SIGNS = {"enter": "⏎", "tab": "⇥", "shift+tab": "⇤", "backspace": "⌫"}


def as_typed(keys: list[events.Key]) -> str:
    """Keys as they were typed, for the line that says they were not used: Enter as ⏎, Tab as ⇥."""
    return "".join(key.character if key.is_printable and key.character else KEY_SIGNS.get(key.key, f"<{key.key}>")
                   for key in keys)


def _edits_text(action: str) -> bool:
    """Whether an Input action changes the text or where the next letter goes (not up and down,
    which the widgets around a field may use, nor the clipboard)."""
    name = action.split("(")[0]
    return name.startswith(("delete_", "cursor_")) or name in ("home", "end")


class TypeAheadInput(Input):
    """Enter posts Submitted straight away; the screen then calls `pass_on(next_field)` or `keep_typing()`."""

    def __init__(self, *args, select_on_focus: bool = True, **kwargs):
        super().__init__(*args, select_on_focus=False, **kwargs)  # done here, see _on_focus
        self._select_when_focused = select_on_focus
        self._held: list[events.Key] | None = None  # holding keys until the screen decides
        self._forward_to: Widget | None = None  # focus has moved on: keys still routed here go there
        self._typed_before_focus = False

    def _on_focus(self, event: events.Focus) -> None:
        # Textual gives the focus after the messages already queued, so keys passed on to a field can
        # be typed into it before its focus arrives. The first of them did what the focus does (see
        # _on_key); done again now, it would select what they typed for the next key to replace
        # ("36.5" then "5" giving "5").
        if self._select_when_focused and not event.from_app_focus and not self._typed_before_focus:
            self.select_all()
        self._typed_before_focus = False

    async def _on_key(self, event: events.Key) -> None:
        if self.holding:
            event.prevent_default()
            event.stop()
            if self._forward_to is not None:
                self._forward_to.post_message(events.Key(event.key, event.character))
            else:
                self._held.append(event)
            return
        if event.key == "enter":
            event.prevent_default()
            event.stop()
            self.hold()
            self.post_message(self.Submitted(self, self.value))
            return
        moves_focus = self._focus_method(event.key)
        if moves_focus:
            # Run now, not once the key has gone up to the screen's bindings: the keys typed behind
            # it are already on their way here, and follow the focus to the field it moves to (so the
            # screen moves it with `set_focus`, at once).
            event.prevent_default()
            event.stop()
            getattr(self.screen, moves_focus)()
            if self.screen.focused is not self and self.screen.focused is not None:
                self._forward_to = self.screen.focused
            return
        if not self.has_focus and not self._typed_before_focus:
            self._typed_before_focus = True
            if self._select_when_focused:
                self.select_all()  # as the focus on its way would: the keys replace what the field held
        editing = [b.action for b in self._bindings.key_to_bindings.get(event.key, ()) if _edits_text(b.action)]
        if editing:
            # The field's own editing keys (backspace, delete, left, right, home, end) act here and now.
            # Left to the binding system they would act only once the key had gone up through the
            # screen, after the letters and the Enter typed behind them: a fast "⌫⌫b⏎" would submit
            # before deleting.
            event.prevent_default()
            event.stop()
            await self.run_action(editing[0])
            return
        await super()._on_key(event)

    def _focus_method(self, key: str) -> str | None:
        """The screen's method a key runs when it moves the focus: Tab, or a binding of the screen's
        to one of its `FOCUS_ACTIONS`."""
        if key in TAB_KEYS:
            return TAB_KEYS[key]
        moving = getattr(self.screen, "FOCUS_ACTIONS", ())
        actions = [b.action for b in self.screen._bindings.key_to_bindings.get(key, ()) if b.action in moving]
        return f"action_{actions[0]}" if actions else None

    @property
    def holding(self) -> bool:
        """Whether keys typed now are held or passed on, not typed here."""
        return self._forward_to is not None or self._held is not None

    def hold(self) -> None:
        """From now the keys that arrive are held until the screen decides where they go."""
        self._held = []

    def pass_on(self, target: Widget) -> None:
        """Typing continues in `target`: the held keys go there first, then any still routed here."""
        held, self._held = self._held or [], None
        self._forward_to = None if target is self else target
        for key in held:
            target.post_message(events.Key(key.key, key.character))

    def keep_typing(self) -> None:
        """Enter led nowhere (nothing to pick, nothing saved): the held keys go back into this field."""
        self.pass_on(self)

    def take_held(self) -> list[events.Key]:
        """Enter finished the form: the keys typed after it, for the screen behind (see `replay`)."""
        held, self._held, self._forward_to = self._held or [], None, None
        return held

    def drop_held(self) -> list[events.Key]:
        """Enter opened something that needs a look first: what was typed ahead is set aside (and returned)."""
        dropped = self._held or []
        self._held = None
        self._forward_to = None
        return dropped

    def _on_blur(self, event: events.Blur) -> None:
        # Keys routed here before the focus moved have been passed on; later ones go to the new field.
        self._forward_to = None
        self._held = None
        super()._on_blur(event)


def replay(app, keys: list[events.Key]) -> None:
    """Keys typed after a form's last Enter, sent on once it has closed: they were meant for what is behind."""
    for key in keys:
        event = events.Key(key.key, key.character)
        # Sent from the app, as the terminal's keys are: a key made inside a screen's handler would
        # otherwise stop bubbling at that screen and never reach the bindings the app checks.
        event.set_sender(app)
        app.post_message(event)


class EarlyKeys:
    """Mixed into a dialog opened by a key: the keys typed straight after that key, before a field
    has the focus, go to the field that is getting it (`first_field`), not to the screen behind.

    Such keys reach the dialog itself, and may be read only after the focus has landed: a focused
    TypeAheadInput takes its own text, Tab and Enter, so one of those reaching the dialog while it
    has the focus was sent before, and goes to it."""

    def first_field(self) -> Widget:
        raise NotImplementedError

    def on_key(self, event: events.Key) -> None:
        focused = self.focused
        if isinstance(focused, Input) and not isinstance(focused, TypeAheadInput):
            return
        if event.is_printable or event.key in ("enter", "tab"):
            event.stop()
            event.prevent_default()
            target = focused if isinstance(focused, TypeAheadInput) else self.first_field()
            target.post_message(events.Key(event.key, event.character))
