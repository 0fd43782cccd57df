"""The line at the top of every screen: the day under review, who is acting, which patients are shown
and how many of the caseload, and their open alerts by severity."""

from __future__ import annotations

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
    words = narrowed_by(filters)
    return f"{', '.join(words)}: {shown} of {total}" if words else f"all {total}"


NAME_WIDTH = 18


class StatusLine(Static):
    """Reads the app's caseload and redraws when it changes. It counts the patients its screen shows:
    the list's filters once the list has given them (`show_filters`), else the app's scope (mine/all)."""

    def __init__(self, **kwargs) -> None:
        super().__init__(**kwargs)
        self._filters: Filters | None = None

    def on_mount(self) -> None:
        self.watch(self.app, "roster", self._redraw)
        self.watch(self.app, "mine", self._redraw)

    def show_filters(self, filters: Filters) -> None:
        self._filters = filters
        self._redraw()

    def _redraw(self, _value=None) -> None:
        app = self.app
        actor = app.clinic.actor if app.clinic.signed_in else None
        today = app.clinic.as_of
        text = Text(f"{today.day} {today.strftime('%b %Y')}", style="bold")
        if app.clinic.viewing_another_day:
            text.append(" read-only view", style="reverse")
        if actor is not None:
            text.append(" ")
            text.append_text(literal(actor.staff.name[:NAME_WIDTH]))
            text.append(f" ({actor.role.value})", style="dim")
        filters = self._filters or Filters(Scope.MINE if app.mine and actor is not None else Scope.ALL)
        lines = visible(app.roster, filters, actor.id if actor is not None else None)
        counts = severity_counts(lines)
        text.append(f" │ {shown_count(filters, len(lines), len(app.roster))} │", style="dim")
        for severity in Severity:
            n = counts[severity]
            text.append(" ")
            text.append(f"{severity.value} {n}", style=app.tone(severity) if n else "dim")
        self.update(text)
