"""Safe text: user text made inert before any terminal, screen or file shows it.

One rule for every front end (`caseload.core.parse.one_line`, without a length limit): characters
that would act on a terminal are shown as escapes, letters and spaces of every kind as typed, so a
name prints the same on the command line and in the interface (`literal` gives the interface a Rich
Text that is never parsed as markup). A spreadsheet cell needs one thing more (`spreadsheet_text`):
a cell that it would run as a formula gets a leading apostrophe, as the OWASP guidance on CSV
injection advises.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from caseload.core.parse import one_line

if TYPE_CHECKING:  # Rich loads with the interface, not with every command (see `caseload.cli`)
    from rich.text import Text


def printable(text: object) -> str:
    """Any text (a name, a note, a refusal quoting what was typed) as one inert line."""
    return "" if text is None else one_line(str(text), limit=None)


def literal(text: object, style: str = "") -> Text:
    """User text as a Rich Text for the interface: never parsed as markup, so '[bold]' shows as typed."""
    from rich.text import Text

    return Text(printable(text), style=style, no_wrap=True)


def quoted(text: object, limit: int = 60) -> str:
    """User text inside a one-line message, in quotes and shortened when long."""
    return "'" + one_line("" if text is None else str(text), limit) + "'"


# Tab and carriage return, also on OWASP's list, never reach this test: `printable` shows them as
# escapes, and a formula sign after leading spaces is caught as well.
FORMULA_STARTS = ("=", "+", "-", "@")


def spreadsheet_text(text: str) -> str:
    """An inert text cell that a spreadsheet shows as text, never runs as a formula."""
    text = printable(text)
    return "'" + text if text.lstrip(" ").startswith(FORMULA_STARTS) else text
