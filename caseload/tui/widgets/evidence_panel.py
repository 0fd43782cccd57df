"""The why of one alert: its message, its evidence in sentences, the rule and its source, and what
was done about it. Phone staff are given a clinical alert as the caller's view (the application's
rule), and see what they may tell a caller."""

from __future__ import annotations

from rich.text import Text
from textual.widgets import Static

from caseload.core.model import Alert, AlertStep
from caseload.presentation.alert_evidence import evidence_sentences, step_sentence
from caseload.presentation.glossary import ALERT_CAUTION, TELL_THE_CALLER, alert_label
from caseload.presentation.days import long_day
from caseload.presentation.safe_text import literal


def _heading(alert: Alert) -> Text:
    text = Text(f"{alert.severity.value} · {alert_label(alert.kind)} ({alert.kind})", style="bold")
    return text.append(f"  raised {long_day(alert.raised_on)}, due {long_day(alert.due)}\n")


def caller_text(alert: Alert) -> Text:
    """What phone staff see of a clinical alert: its kind, and the clinic's words for the caller
    (the caller's view carries them as its message)."""
    text = _heading(alert)
    text.append(f"{TELL_THE_CALLER} ", style="bold")
    text.append_text(literal(alert.message))
    text.append("\nA nurse handles this alert; its clinical details are for clinical staff.", style="dim")
    return text


def evidence_text(alert: Alert, steps: tuple[AlertStep, ...] = ()) -> Text:
    text = _heading(alert)
    text.append_text(literal(alert.message))
    text.append("\n")
    for line in evidence_sentences(alert.kind, alert.evidence):
        text.append("  ")
        text.append_text(literal(line))
        text.append("\n")
    text.append("Rule: ", style="bold")
    text.append_text(literal(alert.rule or "-"))
    text.append("  Source: ", style="bold")
    text.append_text(literal(alert.source or "-"))
    handled = [s for s in steps if s.action != "raise"]  # the heading says when it was raised
    if handled:
        text.append("\nWhat was done:", style="bold")
        for step in handled:
            text.append("\n  ")
            text.append_text(literal(step_sentence(step)))
    elif alert.handled_by:
        text.append(f"\n{alert.state.value} by ", style="dim")
        text.append_text(literal(alert.handled_by))
        if alert.note:
            text.append(": ", style="dim")
            text.append_text(literal(alert.note))
    text.append(f"\n{ALERT_CAUTION}", style="italic dim")
    return text


class EvidencePanel(Static):
    """Shows the highlighted alert as the acting staff member may see it."""

    def show(self, alert: Alert | None, steps: tuple[AlertStep, ...] = ()) -> None:
        if alert is None:
            self.update(Text("Pick an alert to see its evidence.", style="dim"))
        elif self.app.clinic.caller_view_only(alert):
            self.update(caller_text(alert))
        else:
            self.update(evidence_text(alert, steps))
        if self.parent is not None:
            self.parent.scroll_home(animate=False)  # a new alert is read from its top
