"""The glossary: the one label a person reads for each phase, kind, alert and event, and the
one-line wording of what a change did. Shared by the command line, the interface and the exports.

The stored words (phase words, KIND words, alert kind identifiers) stay the contract; these
labels are only what a person reads. Every KIND word is also accepted where a label is.
"""

from __future__ import annotations

from dataclasses import dataclass

from caseload.core.analysis import BLEEDING, LUTEAL, PRE_WINDOW, PREGNANT, UNKNOWN, WINDOW
from caseload.application.entries import Logged
from caseload.application.recompute import Refreshed, RefreshReport
from caseload.core import alerts
from caseload.core.model import MUCUS_SCALE, Entry, Flow, Kind
from caseload.core.pregnancy import NAEGELE, NAEGELE_ADJUSTED, OVULATION
from caseload.presentation.days import iso_day
from caseload.presentation.safe_text import printable

CAUTION = (
    "Predictions are estimates, not contraception advice; every alert defers to the clinic's "
    "protocols and licensed clinical judgement."
)
"""Shown wherever predictions or alerts are: the list, a record."""
ALERT_CAUTION = alerts.CAUTION
"""Shown with every alert (and carried in `alerts --json`)."""

PHASE_LABELS: dict[str, str] = {
    BLEEDING: "flow days",
    PRE_WINDOW: "window ahead",
    WINDOW: "fertile days",
    LUTEAL: "second half",
    PREGNANT: "pregnancy",
    UNKNOWN: "not clear",
}

NEXT_EVENT_LABELS: dict[str, str] = {
    "window start": "window opens",
    "period": "period due",
    "trigger size": "trigger size",
    "pregnancy test": "pregnancy test",
}

NEXT_EVENT_SHORT: dict[str, str] = {  # the same events in a narrow column
    "window start": "window",
    "period": "period",
    "trigger size": "trigger",
    "pregnancy test": "hCG test",
}

OVULATION_METHOD_LABELS: dict[str, str] = {  # how a cycle's ovulation was dated
    "lh": "LH test",
    "shift": "temperature rise",
    "change-point": "temperature level change",
    "mucus": "mucus peak",
}

EDD_METHOD_LABELS: dict[str, str] = {  # the rule that gave a due date
    NAEGELE: "Naegele's rule, LMP + 280 days",
    NAEGELE_ADJUSTED: "Naegele's rule, LMP + 280 days, moved by the usual cycle's difference from 28 days",
    OVULATION: "ovulation + 266 days",
}

EVIDENCE_KEY_LABELS: dict[str, str] = {  # keys of an alert's evidence that read badly as they are
    "iu_l": "IU/L",
    "rise_48h": "rise per 48 h",
    "minimum_48h": "minimum per 48 h",
}

ALERT_LABELS: dict[str, str] = {
    "window-approaching": "window near",
    "window-open": "window open",
    "no-thermal-shift": "no rise yet",
    "monophasic-cycle": "flat cycle",
    "irregular-cycles": "irregular",
    "short-luteal-phase": "short luteal",
    "prolonged-bleeding": "long bleed",
    "period-overdue": "period late",
    "sustained-high-temps": "long high temps",
    "amenorrhoea": "no bleed 90d",
    "hcg-rise-low": "hCG rise low",
    "multiple-follicles": "many follicles",
    "logging-gap": "no entries",
    "fever": "fever",
    "intermenstrual-bleeding": "midcycle bleed",
    "bleeding-in-pregnancy": "bleed in pregnancy",
}


@dataclass(frozen=True)
class KindWords:
    """How a kind is offered in the quick log: its label, other words it answers to, a value hint."""

    kind: Kind
    label: str
    aliases: tuple[str, ...]
    hint: str


# Ordered by how often the phone line logs them: a one-letter prefix picks the commonest.
KIND_WORDS: tuple[KindWords, ...] = (
    KindWords(Kind.TEMP, "temperature", ("bbt",), "36.72, 36.72C or 98.1F"),
    KindWords(Kind.BLEED, "bleeding", ("period", "flow"), ", ".join(f.value for f in Flow)),
    KindWords(Kind.LH, "LH test", ("ovulation test",), "positive, negative or a level in IU/L"),
    KindWords(Kind.MUCUS, "mucus", (), ", ".join(MUCUS_SCALE)),
    KindWords(Kind.HCG, "hCG test", ("pregnancy test",), "positive, negative or 153 IU/L"),
    KindWords(Kind.INTERCOURSE, "intercourse", (), "a short note, e.g. yes"),
    KindWords(Kind.SYMPTOM, "symptom", (), "what was noticed"),
    KindWords(Kind.MED, "medication", ("tablet",), "what was taken"),
    KindWords(Kind.TRIGGER, "trigger shot", (), "what was given"),
    KindWords(Kind.INSEMINATION, "insemination", ("iui",), "what was done"),
    KindWords(Kind.SCAN, "scan", ("ultrasound",), "18,16,12 endo 8.5"),
    KindWords(Kind.NOTE, "note", (), "free text"),
)
WORDS_BY_KIND: dict[Kind, KindWords] = {w.kind: w for w in KIND_WORDS}


def phase_label(phase: str | None) -> str:
    return PHASE_LABELS.get(phase or UNKNOWN, phase or "")


def next_event_short(event: str) -> str:
    return NEXT_EVENT_SHORT.get(event, event)


def ovulation_method_label(method: str | None) -> str:
    return "-" if method is None else OVULATION_METHOD_LABELS.get(method, method)


def edd_method_label(method: str | None) -> str:
    return "-" if method is None else EDD_METHOD_LABELS.get(method, method)


def evidence_key_label(key: str) -> str:
    return EVIDENCE_KEY_LABELS.get(key, key.replace("_", " "))


def alert_label(kind: str) -> str:
    return ALERT_LABELS.get(kind, kind)


def kind_label(kind: Kind) -> str:
    return WORDS_BY_KIND[kind].label


def kind_names() -> list[tuple[str, Kind]]:
    """Every name a kind answers to, KIND words first, then labels, then other words."""
    names = [(w.kind.value, w.kind) for w in KIND_WORDS]
    names += [(w.label.lower(), w.kind) for w in KIND_WORDS]
    names += [(alias, w.kind) for w in KIND_WORDS for alias in w.aliases]
    return names


def complete_kind(typed: str) -> str | None:
    """The first name that starts with what was typed (so 'b' is bleed, 't' is temp)."""
    t = " ".join(typed.lower().split())
    return next((name for name, _ in kind_names() if t and name.startswith(t)), None)


def match_kind(text: str) -> Kind | None:
    """The kind a typed word means: an exact name first, else the first name it begins."""
    typed = " ".join(text.lower().split())
    names = kind_names()
    exact = next((kind for name, kind in names if name == typed), None)
    if exact is not None or not typed:
        return exact
    return next((kind for name, kind in names if name.startswith(typed)), None)


def entry_history(e: Entry) -> str:
    """Where an entry stands among corrections and voids, in words; empty for a plain entry."""
    if e.voided_reason is not None:
        return f"void: {e.voided_reason}"
    if e.superseded_by is not None:
        return f"corrected by {e.superseded_by}"
    if e.supersedes is not None:
        return f"corrects {e.supersedes}: {e.amend_reason}"
    return ""


def refreshed_line(done: Refreshed) -> str:
    """After a change: the patient's cycle day and phase, and any alert it raised."""
    snap = done.snapshot
    day = snap.cycle_day(snap.computed_on)
    text = f"Cycle day {day} ({phase_label(snap.phase)})." if day else f"No cycle start yet ({phase_label(snap.phase)})."
    if done.raised:
        text += " Raised: " + "; ".join(f"{alert_label(a.kind)} ({a.severity.value})" for a in done.raised) + "."
    return text


def _state_after(done: Logged) -> str:
    return " " + refreshed_line(done.refreshed)


def logged_summary(done: Logged) -> str:
    """What a clerk reads after saving: the entry, the new cycle day, any alert it raised."""
    e = done.entry
    unit = " C" if e.kind is Kind.TEMP else ""
    value = printable(e.value.display())
    return f"Saved #{e.id} for {e.patient_id}: {e.kind.value} {value}{unit} on {iso_day(e.day)}." + _state_after(done)


def voided_summary(done: Logged) -> str:
    e = done.entry
    return f"Voided #{e.id} for {e.patient_id} ({e.kind.value} on {iso_day(e.day)})." + _state_after(done)


def refresh_line(done: RefreshReport) -> str:
    """After the whole-caseload refresh."""
    return f"Refreshed {done.patients} patients: {done.raised} alerts raised or escalated, {done.resolved} auto-resolved."


def refresh_progress_line(stage: str, done: int, total: int) -> str:
    """While the morning refresh runs: how far it has come, in whole percent of its stage."""
    share = 100 * done // total if total else 100
    doing = "Computing today's picture" if stage == "computed" else "Saving today's picture"
    return f"{doing}: {share}% of {total} patients… (the list stays usable meanwhile)"
