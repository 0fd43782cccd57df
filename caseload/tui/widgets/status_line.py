"""The line at the top of every screen: the day under review, who is acting, open alerts by severity."""

from __future__ import annotations

from rich.text import Text
from textual.widgets import Static

from caseload.core.model import Severity
from caseload.application.caseload_view import CaseloadLine
from caseload.presentation.safe_text import literal


def severity_counts(lines: tuple[CaseloadLine, ...]) -> dict[Severity, int]:
    counts = {s: 0 for s in Severity}
    for line in lines:
        for alert in line.alerts:
            counts[alert.severity] += 1
    return counts


NAME_WIDTH = 18


class StatusLine(Static):
    """Reads the app's caseload and scope (mine/all) and redraws when either changes."""

    def on_mount(self) -> None:
        self.watch(self.app, "roster", self._redraw)
        self.watch(self.app, "mine", self._redraw)

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
        lines = app.scoped_roster()
        counts = severity_counts(lines)
        text.append(" │ " + ("mine " if app.mine else "all ") + f"{len(lines)} │", style="dim")
        for severity in Severity:
            n = counts[severity]
            text.append(" ")
            text.append(f"{severity.value} {n}", style=app.tone(severity) if n else "dim")
        self.update(text)
