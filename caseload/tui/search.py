"""Finding a patient by what a caller says: an id, part of it, or any part of the name."""

from __future__ import annotations

import unicodedata

from caseload.core.model import Patient


def folded(text: str) -> str:
    """Case- and accent-insensitive form for searching ('Ines' finds 'Inês')."""
    decomposed = unicodedata.normalize("NFKD", text.casefold())
    return "".join(ch for ch in decomposed if not unicodedata.combining(ch))


def match_rank(patient: Patient, typed: str) -> int | None:
    """0 exact id, 1 id prefix, 2 a name word starts with it, 3 found anywhere; None for no match."""
    query = folded(typed.strip())
    if not query:
        return 3
    pid, name = folded(patient.id), folded(patient.name)
    if pid == query:
        return 0
    if pid.startswith(query):
        return 1
    if any(word.startswith(query) for word in name.split()) or name.startswith(query):
        return 2
    if query in name or query in pid:
        return 3
    return None


def find_patients(patients: list[Patient], typed: str, limit: int | None = None) -> list[Patient]:
    """Matching patients, best match first; ties keep the given (triage) order."""
    ranked = [(rank, i, p) for i, p in enumerate(patients) if (rank := match_rank(p, typed)) is not None]
    ranked.sort(key=lambda t: (t[0], t[1]))
    found = [p for _, _, p in ranked]
    return found if limit is None else found[:limit]
