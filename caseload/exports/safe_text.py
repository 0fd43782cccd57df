"""Text cells of a spreadsheet export: never run as a formula, whatever a user typed.

Every text cell of every export is first made inert by the one display rule
(`caseload.presentation.safe_text.printable`: control and bidirectional characters shown as
escapes). What only a spreadsheet needs is here: a cell that it would run as a formula gets a
leading apostrophe, as the OWASP guidance on CSV injection advises.
"""

from __future__ import annotations

from caseload.presentation.safe_text import printable

# Tab and carriage return, also on OWASP's list, never reach this test: `printable` shows them as
# escapes, and a formula sign after leading spaces is caught as well.
FORMULA_STARTS = ("=", "+", "-", "@")


def spreadsheet_text(text: str) -> str:
    """An inert text cell that a spreadsheet shows as text, never runs as a formula."""
    text = printable(text)
    return "'" + text if text.lstrip(" ").startswith(FORMULA_STARTS) else text
