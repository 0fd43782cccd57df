"""Search and filters above the morning list. Posts one Changed message whenever any of them moves."""

from __future__ import annotations

from dataclasses import dataclass
from enum import StrEnum

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


class Scope(StrEnum):
    """Whose patients the list shows: the acting nurse's, everyone's, or those no nurse has yet."""

    MINE = "my patients"
    ALL = "all patients"
    UNASSIGNED = "unassigned"


@dataclass(frozen=True)
class Filters:
    """What the list shows: a scope, one alert kind or any, one plan or any, a search."""

    scope: Scope
    alert_kind: str = ANY
    plan: str = ANY
    search: str = ""

    @property
    def mine(self) -> bool:
        return self.scope is Scope.MINE


class ScopeToggle(Static):
    """The scope in words (so it reads without colour); a click moves it on to the next one."""

    scope: reactive[Scope] = reactive(Scope.ALL)

    class Changed(Message):
        pass

    def render(self) -> Text:
        return Text(f"[{self.scope.value}]")

    def watch_scope(self) -> None:
        self.post_message(self.Changed())

    def on_click(self) -> None:
        order = list(Scope)
        self.scope = order[(order.index(self.scope) + 1) % len(order)]


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
        toggle.set_reactive(ScopeToggle.scope, Scope.MINE if self._mine else Scope.ALL)
        yield toggle

    @property
    def filters(self) -> Filters:
        return Filters(
            scope=self.query_one(ScopeToggle).scope,
            alert_kind=str(self.query_one("#alert-kind", Select).value),
            plan=str(self.query_one("#plan", Select).value),
            search=self.query_one("#search", Input).value,
        )

    def toggle(self, scope: Scope) -> None:
        """`scope`, or all patients when the list shows `scope` already."""
        toggle = self.query_one(ScopeToggle)
        toggle.scope = Scope.ALL if toggle.scope is scope else scope

    def set_mine(self, mine: bool) -> None:
        toggle = self.query_one(ScopeToggle)
        if mine or toggle.scope is Scope.MINE:
            toggle.scope = Scope.MINE if mine else Scope.ALL

    def clear_search(self) -> None:
        self.query_one("#search", Input).value = ""

    @on(Input.Changed)
    @on(Select.Changed)
    @on(ScopeToggle.Changed)
    def _changed(self, event: Message) -> None:
        event.stop()
        self.post_message(self.Changed(self.filters))
