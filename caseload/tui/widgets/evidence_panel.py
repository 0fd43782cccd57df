"""The why of one alert: its message, the numbers and dates behind it, the rule and its source."""

from __future__ import annotations

from rich.text import Text
from textual.widgets import Static

from caseload.core.model import Alert
from caseload.presentation.glossary import ALERT_CAUTION, alert_label
from caseload.presentation.days import long_day
from caseload.presentation.safe_text import literal



def evidence_value(value: object) -> str:
    """Evidence values as a person reads them: lists joined, nothing as a dash."""
    if value is None or value == "":
        return "-"
    if isinstance(value, (list, tuple)):
        return ", ".join(evidence_value(v) for v in value)
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


def evidence_text(alert: Alert | None) -> Text:
    if alert is None:
        return Text("Pick an alert to see its evidence.", style="dim")
    text = Text(f"{alert.severity.value} · {alert_label(alert.kind)} ({alert.kind})", style="bold")
    text.append(f"  raised {long_day(alert.raised_on)}, due {long_day(alert.due)}\n")
    text.append_text(literal(alert.message))
    text.append("\n")
    for key, value in alert.evidence.items():
        text.append(f"  {key}: ", style="bold")
        text.append_text(literal(evidence_value(value)))
        text.append("\n")
    text.append("Rule: ", style="bold")
    text.append_text(literal(alert.rule or "-"))
    text.append("  Source: ", style="bold")
    text.append_text(literal(alert.source or "-"))
    if alert.handled_by:
        text.append(f"\n{alert.state.value} by ", style="dim")
        text.append_text(literal(alert.handled_by))
        if alert.note:
            text.append(": ", style="dim")
            text.append_text(literal(alert.note))
    text.append(f"\n{ALERT_CAUTION}", style="italic dim")
    return text


class EvidencePanel(Static):
    def show(self, alert: Alert | None) -> None:
        self.update(evidence_text(alert))
