"""Finding a patient by what a caller says: an id, part of it, or the name's words in any order."""

from __future__ import annotations

import re
import unicodedata

from caseload.core.model import Patient

# Letters that carry their mark inside them, so that no Unicode decomposition takes it off.
UNMARKED = str.maketrans({"ł": "l", "ø": "o", "đ": "d", "ð": "d", "ħ": "h", "ı": "i", "æ": "ae", "œ": "oe", "þ": "th"})
WORD = re.compile(r"\w+")


def folded(text: str) -> str:
    """Case- and accent-insensitive form for searching ('Ines' finds 'Inês', 'lukasz' finds 'Łukasz')."""
    decomposed = unicodedata.normalize("NFKD", text.casefold()).translate(UNMARKED)
    return "".join(ch for ch in decomposed if not unicodedata.combining(ch))


def match_rank(patient: Patient, typed: str) -> int | None:
    """0 exact id, 1 id prefix, 2 every typed word starts a word of the name (in any order, so
    "nowak katarzyna" finds Katarzyna Nowak), 3 every typed word found anywhere; None for no match.
    Case and accents never matter ("ines" finds Inês)."""
    words = WORD.findall(folded(typed))
    if not words:
        return 3
    query, pid, name = " ".join(words), folded(patient.id), folded(patient.name)
    if pid == query:
        return 0
    if pid.startswith(query):
        return 1
    name_words = WORD.findall(name)
    if all(any(w.startswith(q) for w in name_words) for q in words):
        return 2
    if all(q in name for q in words) or query in pid:
        return 3
    return None


def find_patients(patients: list[Patient], typed: str, limit: int | None = None) -> list[Patient]:
    """Matching patients, best match first; ties keep the given (triage) order."""
    ranked = [(rank, i, p) for i, p in enumerate(patients) if (rank := match_rank(p, typed)) is not None]
    ranked.sort(key=lambda t: (t[0], t[1]))
    found = [p for _, _, p in ranked]
    return found if limit is None else found[:limit]
