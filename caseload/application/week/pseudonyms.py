"""De-identifying a computed summary: patients become keyed pseudonyms, names leave free text.

Only patients are de-identified. Staff ids stay: they are the clinic's own staff, and a
supervisor's review of workload needs them. The pseudonym function itself (a keyed hash) is
supplied by the caller, who holds the store's secret.
"""

from __future__ import annotations

import re
from collections.abc import Callable, Iterable
from dataclasses import replace

from caseload.core.model import Patient
from caseload.application.week.figures import PatientRef, WeeklySummary
from caseload.application.week.clinical_events import count_events, event_order, pregnancy_order
from caseload.application.week.compile import count_reasons, gap_order

REMOVED = "[removed]"
BIRTH_DATE_FORMATS = ("%Y-%m-%d", "%d/%m/%Y", "%d.%m.%Y", "%d-%m-%Y")
WORD = re.compile(r"[^\W\d_]+")  # runs of letters: hyphens and apostrophes split a name's parts
DATE_LIKE = re.compile(r"\d{1,4}[-/.]\d{1,2}[-/.]\d{1,4}")


def text_scrubber(patients: Iterable[Patient]) -> Callable[[str], str]:
    """Remove every patient's birth date and every word of their names from a free text.

    Words are compared case-blind and one by one, so a name is caught in any order or spelling
    of case, and a part of a name is removed even where it is also an ordinary word.
    """
    words: set[str] = set()
    dates: set[str] = set()
    for p in patients:
        parts = WORD.findall(p.name) + ["".join(WORD.findall(token)) for token in p.name.split()]
        words.update(w.casefold() for w in parts if len(w) >= 2)
        dates.update(p.born.strftime(f) for f in BIRTH_DATE_FORMATS)

    def scrub(text: str) -> str:
        text = DATE_LIKE.sub(lambda m: REMOVED if m[0] in dates else m[0], text)
        return WORD.sub(lambda m: REMOVED if m[0].casefold() in words else m[0], text)

    return scrub


def deidentified(summary: WeeklySummary, pseudonym: Callable[[str], str],
                 scrub: Callable[[str], str]) -> WeeklySummary:
    """The same summary with every patient as a pseudonym and no names in free text."""

    def ref(p: PatientRef) -> PatientRef:
        return PatientRef(pseudonym(p.id), None)

    c, q = summary.clinical, summary.quality
    events = tuple(sorted((replace(e, patient=ref(e.patient)) for e in c.events), key=event_order))
    clinical = replace(
        c,
        counts=count_events(events),
        events=events,
        pregnancies=tuple(sorted((replace(p, patient=ref(p.patient)) for p in c.pregnancies), key=pregnancy_order)),
    )
    changes = tuple(replace(ch, patient=ref(ch.patient), reason=scrub(ch.reason)) for ch in q.changes)
    reasons, reasons_total = count_reasons(changes)
    quality = replace(
        q,
        gaps=tuple(sorted((replace(g, patient=ref(g.patient)) for g in q.gaps), key=gap_order)),
        changes=changes,
        reasons=reasons,
        reasons_total=reasons_total,
    )
    return replace(summary, deidentified=True, clinical=clinical, quality=quality)
