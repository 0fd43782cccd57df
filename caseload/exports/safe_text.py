"""Text as an export shows it: inert in a page or a spreadsheet, whatever a user typed.

Control characters could break a file's layout or a terminal that prints it; bidirectional
controls can make a cell read as something else than it holds (the "Trojan Source" reordering,
Boucher and Anderson 2021). Both are taken out of every text cell. Cells that a spreadsheet
would run as a formula get a leading apostrophe, as the OWASP guidance on CSV injection advises.
"""

from __future__ import annotations

import unicodedata

BIDI_CONTROLS = frozenset("\u061c\u200e\u200f\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069")
LINE_BREAKING = frozenset("\t\n\v\f\r\x1c\x1d\x1e\x85\u2028\u2029")
# Tab and carriage return, also on OWASP's list, never reach this test: `inert` makes them spaces,
# and a formula sign after leading spaces is caught as well.
FORMULA_STARTS = ("=", "+", "-", "@")


def inert(text: str) -> str:
    """The text without control characters or bidirectional controls (line breaks become spaces)."""
    out = []
    for ch in text:
        if ch in LINE_BREAKING:
            out.append(" ")
        elif ch not in BIDI_CONTROLS and unicodedata.category(ch) != "Cc":
            out.append(ch)
    return "".join(out)


def spreadsheet_text(text: str) -> str:
    """An inert text cell that a spreadsheet shows as text, never runs as a formula."""
    text = inert(text)
    return "'" + text if text.lstrip(" ").startswith(FORMULA_STARTS) else text
