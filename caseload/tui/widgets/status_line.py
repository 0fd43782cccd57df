"""The line at the top of every screen: the day under review, who is acting, which patients are shown
and how many of the caseload, and their open alerts by severity.

On a narrow terminal the lesser words go first, one at a time, so the alert counts are kept whole:
the role, the year, the name, what narrows the list, how many are shown, then the severities that
count none; "read-only view" and the day stay."""

from __future__ import annotations

from dataclasses import dataclass, replace
from datetime import date
from typing import Callable

from rich.text import Text
from textual.widgets import Static

from caseload.core.model import Severity
from caseload.application.caseload_view import CaseloadLine
from caseload.presentation.safe_text import literal
from caseload.tui.widgets.filter_bar import Filters, Scope, narrowed_by, visible


def severity_counts(lines: tuple[CaseloadLine, ...]) -> dict[Severity, int]:
    counts = {s: 0 for s in Severity}
    for line in lines:
        for alert in line.alerts:
            counts[alert.severity] += 1
    return counts


def shown_count(filters: Filters, shown: int, total: int) -> str:
    """'all 40' when every patient under care is shown, else what narrows the list and how many of
    the caseload it leaves: 'unassigned: 3 of 40', 'mine, fever: 1 of 40'."""
    return counted_as(tuple(narrowed_by(filters)), shown, total)


def counted_as(words: tuple[str, ...], shown: int, total: int, why: bool = True) -> str:
    """`shown_count` from the words that narrow the list; without the words (`why` False) a narrowed
    list is still said as such: '3 of 40'."""
    if not words:
        return f"all {total}"
    return f"{', '.join(words)}: {shown} of {total}" if why else f"{shown} of {total}"


NAME_WIDTH = 18


@dataclass(frozen=True)
class StatusParts:
    """What the status line says, and which of its lesser words a narrow terminal has dropped."""

    day: date
    read_only: bool
    staff: tuple[str, str] | None  # name, role
    narrowed: tuple[str, ...]  # what narrows the list (`narrowed_by`)
    shown: int
    total: int
    counts: dict[Severity, int]
    role: bool = True
    year: bool = True
    name: bool = True
    why_narrowed: bool = True
    how_many: bool = True
    zero_counts: bool = True
    read_only_word: str = "read-only view"


# The lesser words, in the order a narrow terminal drops them.
DROPS: tuple[dict, ...] = (
    {"role": False}, {"year": False}, {"name": False}, {"why_narrowed": False}, {"how_many": False},
    {"zero_counts": False}, {"read_only_word": "read-only"},
)


def status_text(parts: StatusParts, tone: Callable[[Severity], str]) -> Text:
    p = parts
    text = Text(f"{p.day.day} {p.day.strftime('%b')}" + (f" {p.day.year}" if p.year else ""), style="bold")
    if p.read_only:
        text.append(f" {p.read_only_word}", style="reverse")
    if p.staff is not None and p.name:
        text.append(" ")
        text.append_text(literal(p.staff[0][:NAME_WIDTH]))
        if p.role:
            text.append(f" ({p.staff[1]})", style="dim")
    how_many = f" │ {counted_as(p.narrowed, p.shown, p.total, p.why_narrowed)}" if p.how_many else ""
    text.append(f"{how_many} │", style="dim")
    counted = [s for s in Severity if p.zero_counts or p.counts[s]]
    if not counted:
        text.append(" no open alerts", style="dim")
    for severity in counted:
        n = p.counts[severity]
        text.append(" ")
        text.append(f"{severity.value} {n}", style=tone(severity) if n else "dim")
    return text


def fitted_status(parts: StatusParts, tone: Callable[[Severity], str], width: int) -> Text:
    """The fullest status line that fits `width` cells, dropping the lesser words in DROPS order;
    the shortest form when none fits."""
    text = status_text(parts, tone)
    for drop in DROPS:
        if text.cell_len <= width:
            break
        parts = replace(parts, **drop)
        text = status_text(parts, tone)
    return text


class StatusLine(Static):
    """Reads the app's caseload and redraws when it changes. It counts the patients its screen shows:
    the list's filters once the list has given them (`show_filters`), else the app's scope (mine/all).
    It is drawn again at each resize, to fit the width it is given."""

    def __init__(self, **kwargs) -> None:
        super().__init__(**kwargs)
        self._filters: Filters | None = None

    def on_mount(self) -> None:
        self.watch(self.app, "roster", self._redraw)
        self.watch(self.app, "mine", self._redraw)

    def on_resize(self) -> None:
        self._redraw()

    def show_filters(self, filters: Filters) -> None:
        self._filters = filters
        self._redraw()

    def _redraw(self, _value=None) -> None:
        app = self.app
        actor = app.clinic.actor if app.clinic.signed_in else None
        filters = self._filters or Filters(Scope.MINE if app.mine and actor is not None else Scope.ALL)
        lines = visible(app.roster, filters, actor.id if actor is not None else None)
        parts = StatusParts(
            day=app.clinic.as_of, read_only=app.clinic.viewing_another_day,
            staff=(actor.staff.name, actor.role.value) if actor is not None else None,
            narrowed=tuple(narrowed_by(filters)), shown=len(lines), total=len(app.roster),
            counts=severity_counts(lines),
        )
        width = self.content_size.width
        self.update(fitted_status(parts, app.tone, width) if width else status_text(parts, app.tone))
