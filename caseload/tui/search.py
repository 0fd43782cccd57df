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
    typed_id = folded(typed.strip())
    words = WORD.findall(typed_id)
    if not words:
        return 3
    query, pid, name = " ".join(words), folded(patient.id), folded(patient.name)
    # The id as typed, and as words: an id may hold '.', '-' or '_', which words leave out.
    if pid in (typed_id, query):
        return 0
    if pid.startswith((typed_id, query)):
        return 1
    name_words = WORD.findall(name)
    if all(any(w.startswith(q) for w in name_words) for q in words):
        return 2
    if all(q in name for q in words) or query in pid:
        return 3
    return None


def find_patients(patients: list[Patient], typed: str, limit: int | None = None) -> list[Patient]:
    """Matching patients, best match first; ties keep the given (triage) order, except that the id
    typed letter for letter comes before one differing only in case, which a store registered before
    ids were unique whatever their case may still hold."""
    typed_id = typed.strip()
    ranked = [(rank, p.id != typed_id, i, p) for i, p in enumerate(patients)
              if (rank := match_rank(p, typed)) is not None]
    ranked.sort(key=lambda t: t[:3])
    found = [t[3] for t in ranked]
    return found if limit is None else found[:limit]
