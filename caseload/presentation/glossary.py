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
from caseload.presentation.safe_text import printable, quoted

CAUTION = (
    "Predictions are estimates, not contraception advice; every alert defers to the clinic's "
    "protocols and licensed clinical judgement."
)
"""Shown wherever predictions or alerts are: the list, a record."""
ALERT_CAUTION = alerts.CAUTION
"""Shown with every alert (and carried in `alerts --json`)."""
TELL_THE_CALLER = "Tell the caller:"
"""Before the protocol's words for the caller, where phone staff read a clinical alert."""

@dataclass(frozen=True)
class Term:
    """One word of the glossary: the label, the short form a narrow column has room for, what it means."""

    label: str
    short: str
    meaning: str


# Where each group of words is read; the README's glossary table says so.
PHASES_SHOWN = "list and `caseload list` (short), record, quick log, `caseload show`"
ALERTS_SHOWN = "list and `caseload list` (short), alert queue, record, `caseload alerts`, exports"

# The phase of the cycle she is in today, in the words a nurse writes in a chart (the stored phase
# words stay the contract).
PHASE_TERMS: dict[str, Term] = {
    BLEEDING: Term("menses", "menses", "bleeding of light flow or more, from cycle day 1 to the day after the last"),
    PRE_WINDOW: Term("follicular phase", "follicular", "after the menses, before the fertile window is expected"),
    WINDOW: Term("fertile window", "fertile", "the six days ending on the most likely ovulation day (Wilcox 1995), "
                 "or an LH surge or mucus peak with no confirmed thermal shift yet"),
    LUTEAL: Term("luteal phase", "luteal", "post-ovulatory: from ovulation (a confirmed thermal shift or a dated "
                 "marker) to the next menses"),
    PREGNANT: Term("pregnancy", "pregnancy", "a positive hCG this cycle, or recorded pregnant"),
    UNKNOWN: Term("phase undetermined", "undetermined", "no cycle start yet, or past the expected window with no "
                  "sign of ovulation (possibly an anovulatory cycle)"),
}

NEXT_EVENT_LABELS: dict[str, str] = {
    "window start": "fertile window opens",
    "period": "next period due",
    "trigger size": "lead follicle at trigger size",
    "pregnancy test": "pregnancy test due",
}

NEXT_EVENT_SHORT: dict[str, str] = {  # the same events in a narrow column
    "window start": "window",
    "period": "period",
    "trigger size": "trigger",
    "pregnancy test": "hCG test",
}

# How a cycle's ovulation was dated (the stored method words stay the contract).
OVULATION_METHOD_LABELS: dict[str, str] = {"lh": "LH test", "shift": "thermal shift",
                                           "change-point": "temperature level change", "mucus": "mucus peak"}

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

# The evidence a cycle's ovulation was dated by, as a phrase inside a sentence ("dated ... by ...").
OVULATION_EVIDENCE_WORDS: dict[str, str] = {
    "lh": "a positive LH test",
    "shift": "the thermal shift",
    "lh+shift": "an LH test and the thermal shift",
    "change-point": "a temperature level change",
    "lh+change-point": "an LH test and a temperature level change",
    "mucus": "the mucus peak",
    "elapsed": "the days passed without a sign",
}

# Each alert kind (the identifiers stay the contract) in the words a nurse writes in a chart; the
# short form fits the list's alert column beside the severity and the count of more.
ALERT_TERMS: dict[str, Term] = {
    "window-approaching": Term("fertile window soon", "window soon",
                               "P(fertile) reaches 20% within the next 3 days"),
    "window-open": Term("fertile window open", "window open",
                        "P(fertile) today at least 50%, or an LH surge with no thermal shift yet"),
    "no-thermal-shift": Term("no thermal shift", "no shift",
                             "well past the expected ovulation with no thermal shift confirmed"),
    "monophasic-cycle": Term("monophasic cycle", "monophasic",
                             "a charted cycle that ended with no thermal shift: possibly anovulatory"),
    "irregular-cycles": Term("irregular cycles", "irregular",
                             "cycle frequency or regularity outside the FIGO 2018 normal limits"),
    "short-luteal-phase": Term("short luteal phase", "short luteal", "a luteal phase of 10 days or fewer"),
    "prolonged-bleeding": Term("prolonged bleeding", "long bleed", "menses longer than 8 days (FIGO 2018)"),
    "period-overdue": Term("period overdue", "overdue", "no menses past the latest expected day: pregnancy test"),
    "sustained-high-temps": Term("sustained high BBT", "high BBT",
                                 "basal temperature above the coverline for 18 days or more"),
    "amenorrhoea": Term("amenorrhoea", "amenorrhoea", "90 days or more with no menses, not pregnant"),
    "hcg-rise-low": Term("suboptimal hCG rise", "slow hCG",
                         "serum hCG rising less than the protocol minimum per 48 h, or falling"),
    "multiple-follicles": Term("multiple follicles", "multifollicular",
                               "more mature follicles on a scan than the protocol allows"),
    "logging-gap": Term("charting gap", "charting gap", "no entry for 3 days mid-cycle"),
    "fever": Term("fever", "fever", "a temperature of 38.0 C or more"),
    "intermenstrual-bleeding": Term("intermenstrual bleeding", "IMB",
                                    "bleeding between menses, marked mid-cycle (FIGO 2018 symptom)"),
    "bleeding-in-pregnancy": Term("bleeding in pregnancy", "PV bleed",
                                  "a bleed after a positive hCG; not taken as menses"),
}
PHASE_LABELS: dict[str, str] = {phase: term.label for phase, term in PHASE_TERMS.items()}
ALERT_LABELS: dict[str, str] = {kind: term.label for kind, term in ALERT_TERMS.items()}

# Mucus by its description (the stored words), with the two-letter mark the chart's strip has room for.
MUCUS_MARKS: dict[str, str] = {"dry": "dr", "damp": "da", "sticky": "sk", "creamy": "cr", "watery": "wa",
                               "stretchy": "st"}
MUCUS_LEGEND = "mucus " + " · ".join(f"{mark} {word}" for word, mark in MUCUS_MARKS.items())

# Other words a person reads, kept here so that each is said one way everywhere.
OTHER_TERMS: tuple[tuple[Term, str], ...] = (
    (Term("cycle day", "CD", "days from the first day of the menses, that day being 1"),
     "list (CD), record, quick log, `caseload list` (day), exports"),
    (Term("P(fertile)", "P(fertile)", "the chance that a day is in the fertile window, as a percentage"),
     "record outlook, chart, alerts"),
    (Term("thermal shift", "shift", "the BBT rise after ovulation, confirmed by the three-over-six rule"),
     "record, chart, alerts, `caseload list` and `show`"),
    (Term("coverline", "coverline", "the line the three-over-six rule draws over the six readings before the rise"),
     "chart, record, referral pack"),
    (Term("mucus", MUCUS_LEGEND.removeprefix("mucus "), "as she describes it: " + ", ".join(MUCUS_MARKS)
          + " (least to most fertile)"), "quick log, entries, chart strip (two letters)"),
)


def glossary_rows() -> list[tuple[str, str, str, str]]:
    """(term, short form, meaning, where it shows) for every word above: the README's table."""
    rows = [(t.label, t.short, t.meaning, PHASES_SHOWN) for t in PHASE_TERMS.values()]
    rows += [(t.label, t.short, t.meaning, ALERTS_SHOWN) for t in ALERT_TERMS.values()]
    return rows + [(t.label, t.short, t.meaning, shown) for t, shown in OTHER_TERMS]


def more_alerts(count: int) -> str:
    """After the row's most pressing alert: how many more the record lists."""
    return f"+{count} more" if count > 0 else ""


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


def phase_short(phase: str | None) -> str:
    """The phase in a narrow column."""
    term = PHASE_TERMS.get(phase or UNKNOWN)
    return term.short if term else phase or ""


def mucus_mark(word: str) -> str:
    return MUCUS_MARKS.get(word, word[:2])


def next_event_short(event: str) -> str:
    return NEXT_EVENT_SHORT.get(event, event)


def ovulation_method_label(method: str | None) -> str:
    return "-" if method is None else OVULATION_METHOD_LABELS.get(method, method)


def ovulation_evidence_words(method: str | None) -> str:
    return "an unrecorded method" if not method else OVULATION_EVIDENCE_WORDS.get(method, method)


def edd_method_label(method: str | None) -> str:
    return "-" if method is None else EDD_METHOD_LABELS.get(method, method)


def evidence_key_label(key: str) -> str:
    return EVIDENCE_KEY_LABELS.get(key, key.replace("_", " "))


def alert_label(kind: str) -> str:
    return ALERT_LABELS.get(kind, kind)


def alert_short(kind: str) -> str:
    """The alert in a narrow column."""
    term = ALERT_TERMS.get(kind)
    return term.short if term else kind


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


def not_used(typed: str) -> str:
    """Keys typed ahead of a refusal or a question are set aside so that they cannot answer it or land
    in the wrong place; this line says which, so that nothing typed is lost without a word."""
    return f"Typed after Enter and not used: {quoted(typed)}. Type it again once you have read the above."


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
