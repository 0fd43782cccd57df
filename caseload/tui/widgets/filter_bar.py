"""Search and filters above the morning list. Posts one Changed message whenever any of them moves."""

from __future__ import annotations

from dataclasses import dataclass
from enum import StrEnum

from rich.text import Text
from textual import events, on
from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.message import Message
from textual.reactive import reactive
from textual.widgets import Input, Select, Static

from caseload.application.caseload_view import CaseloadLine
from caseload.core.model import Plan
from caseload.presentation.glossary import ALERT_LABELS, alert_short
from caseload.tui.search import find_patients
from caseload.tui.widgets.type_ahead import TypeAheadInput

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


SCOPE_WORDS = {Scope.MINE: "mine", Scope.ALL: "all", Scope.UNASSIGNED: "unassigned"}


def visible(lines: tuple[CaseloadLine, ...], filters: Filters, me: str | None) -> tuple[CaseloadLine, ...]:
    """The lines the filters let through, in triage order; during a search best match first (ties in
    triage order), so the top row is the patient Enter opens."""
    kept = []
    for line in lines:
        if filters.scope is Scope.MINE and line.patient.nurse_id != me:
            continue
        if filters.scope is Scope.UNASSIGNED and line.patient.nurse_id is not None:
            continue
        if filters.plan != ANY and line.patient.plan.value != filters.plan:
            continue
        if filters.alert_kind != ANY and all(a.kind != filters.alert_kind for a in line.alerts):
            continue
        kept.append(line)
    if not filters.search.strip():
        return tuple(kept)
    by_id = {line.patient.id: line for line in kept}
    return tuple(by_id[p.id] for p in find_patients([line.patient for line in kept], filters.search))


def narrowed_by(filters: Filters) -> list[str]:
    """What narrows the list, in a few words each ('unassigned', 'fever', 'plan timed', 'search');
    none when it shows every patient under care."""
    words = [] if filters.scope is Scope.ALL else [SCOPE_WORDS[filters.scope]]
    if filters.alert_kind != ANY:
        words.append(alert_short(filters.alert_kind))
    if filters.plan != ANY:
        words.append(f"plan {filters.plan}")
    if filters.search.strip():
        words.append("search")
    return words


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


class SearchField(TypeAheadInput):
    """The search. Enter and Escape are taken in turn with the letters typed before them, and the keys
    typed after either wait for the screen to say where they go (see TypeAheadInput)."""

    class Left(Message):
        """Escape: the search is to be cleared and the list to have the keys that follow."""

        def __init__(self, field: SearchField) -> None:
            super().__init__()
            self.field = field

    async def _on_key(self, event: events.Key) -> None:
        if event.key == "escape" and not self.holding:
            event.prevent_default()
            event.stop()
            self.hold()
            self.post_message(self.Left(self))
            return
        await super()._on_key(event)


class FilterBar(Horizontal):
    class Changed(Message):
        def __init__(self, filters: Filters) -> None:
            super().__init__()
            self.filters = filters

    def __init__(self, mine: bool, **kwargs):
        super().__init__(**kwargs)
        self._mine = mine

    def compose(self) -> ComposeResult:
        # Enter acts on the text as typed then; keys typed on after it wait for what it opens.
        yield SearchField(placeholder="/ find id or name", id="search", compact=True)
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
