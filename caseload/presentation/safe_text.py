"""Safe text: user text made inert before any terminal, screen or file shows it.

One rule for every front end (`caseload.core.parse.one_line`, without a length limit): characters
that would act on a terminal are shown as escapes, letters and spaces of every kind as typed, so a
name prints the same on the command line and in the interface.
"""

from __future__ import annotations

from caseload.core.parse import one_line


def printable(text: object) -> str:
    """Any text (a name, a note, a refusal quoting what was typed) as one inert line."""
    return "" if text is None else one_line(str(text), limit=None)


def quoted(text: object, limit: int = 60) -> str:
    """User text inside a one-line message, in quotes and shortened when long."""
    return "'" + one_line("" if text is None else str(text), limit) + "'"
