"""Search and filters above the morning list. Posts one Changed message whenever any of them moves."""

from __future__ import annotations

from dataclasses import dataclass

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.message import Message
from textual.reactive import reactive
from textual.widgets import Input, Select, Static

from caseload.core.model import Plan
from caseload.presentation.glossary import ALERT_LABELS

ANY = "any"


@dataclass(frozen=True)
class Filters:
    """What the list shows: my patients or all, one alert kind or any, one plan or any, a search."""

    mine: bool
    alert_kind: str = ANY
    plan: str = ANY
    search: str = ""


class ScopeToggle(Static):
    """My patients or all; a click or `m` flips it. Says the scope in words, so it reads without colour."""

    mine: reactive[bool] = reactive(False)

    class Changed(Message):
        pass

    def render(self) -> Text:
        return Text("[my patients]" if self.mine else "[all patients]")

    def watch_mine(self) -> None:
        self.post_message(self.Changed())

    def on_click(self) -> None:
        self.mine = not self.mine


class FilterBar(Horizontal):
    class Changed(Message):
        def __init__(self, filters: Filters) -> None:
            super().__init__()
            self.filters = filters

    def __init__(self, mine: bool, **kwargs):
        super().__init__(**kwargs)
        self._mine = mine

    def compose(self) -> ComposeResult:
        yield Input(placeholder="/ find id or name", id="search", compact=True)
        kinds = [("alert: any", ANY)] + [(f"alert: {label}", kind) for kind, label in ALERT_LABELS.items()]
        yield Select(kinds, value=ANY, allow_blank=False, id="alert-kind", compact=True)
        plans = [("plan: any", ANY)] + [(f"plan: {p.value}", p.value) for p in Plan]
        yield Select(plans, value=ANY, allow_blank=False, id="plan", compact=True)
        toggle = ScopeToggle(id="mine")
        toggle.set_reactive(ScopeToggle.mine, self._mine)
        yield toggle

    @property
    def filters(self) -> Filters:
        return Filters(
            mine=self.query_one(ScopeToggle).mine,
            alert_kind=str(self.query_one("#alert-kind", Select).value),
            plan=str(self.query_one("#plan", Select).value),
            search=self.query_one("#search", Input).value,
        )

    def toggle_mine(self) -> None:
        toggle = self.query_one(ScopeToggle)
        toggle.mine = not toggle.mine

    def set_mine(self, mine: bool) -> None:
        self.query_one(ScopeToggle).mine = mine

    def clear_search(self) -> None:
        self.query_one("#search", Input).value = ""

    @on(Input.Changed)
    @on(Select.Changed)
    @on(ScopeToggle.Changed)
    def _changed(self, event: Message) -> None:
        event.stop()
        self.post_message(self.Changed(self.filters))
