"""Two colour themes of our own: slate and teal with ochre accents, one for dark terminals, one for light.

Severity never relies on colour alone (each shows its word), and Textual drops colour under NO_COLOR.
"""

from __future__ import annotations

from textual.theme import Theme

DUSK = Theme(
    name="caseload-dusk",
    primary="#3A9E9A",
    secondary="#8DA2C8",
    accent="#D9A441",
    warning="#D9A441",
    error="#E8894A",
    success="#8DBF73",
    foreground="#E4E2DC",
    background="#171A1E",
    surface="#1F2429",
    panel="#2B323A",
    dark=True,
)

PAPER = Theme(
    name="caseload-paper",
    primary="#1F6F6B",
    secondary="#3F4F7A",
    accent="#8A5D0A",
    warning="#8A5D0A",
    error="#A8431A",
    success="#3F7D3A",
    foreground="#22262A",
    background="#F5F3EE",
    surface="#EBE8E1",
    panel="#DCD7CC",
    dark=False,
)

THEMES = (DUSK, PAPER)
DEFAULT_THEME = DUSK.name
