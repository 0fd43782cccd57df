"""User text as Rich renderables for the interface, and the form searches compare."""

from __future__ import annotations

import unicodedata

from rich.text import Text

from caseload.presentation.safe_text import printable


def literal(text: object, style: str = "") -> Text:
    """User text as a Rich Text: never parsed as markup, so '[bold]' shows as typed."""
    return Text(printable(text), style=style, no_wrap=True)


# Letters that carry their mark inside them, so that no Unicode decomposition takes it off.
UNMARKED = str.maketrans({"ł": "l", "ø": "o", "đ": "d", "ð": "d", "ħ": "h", "ı": "i", "æ": "ae", "œ": "oe", "þ": "th"})


def folded(text: str) -> str:
    """Case- and accent-insensitive form for searching ('Ines' finds 'Inês', 'lukasz' finds 'Łukasz')."""
    decomposed = unicodedata.normalize("NFKD", text.casefold()).translate(UNMARKED)
    return "".join(ch for ch in decomposed if not unicodedata.combining(ch))
