"""One sanitiser for every front end: what it escapes, what it keeps, and that the command line and the
interface print a name the same way."""

from __future__ import annotations

import sys
import unicodedata
from datetime import date

from click.testing import CliRunner
from hypothesis import given
from hypothesis import strategies as st

from caseload.application.clinic import Clinic, Identity
from caseload.application.identity import os_account
from caseload.cli import main
from caseload.core.parse import INERT_CATEGORIES
from caseload.presentation.safe_text import literal, printable, quoted
from caseload.tui.app import make_app
from tests.tui.conftest import settle

REAL = date(2026, 12, 1)
NAME = "Ana\u00a0Lima"  # a no-break space between the names, as some keyboards type it


def test_terminal_actions_are_shown_as_escapes():
    # The escapes are Python's own unicode_escape forms (Python documentation, "Text Encodings").
    assert printable("Pia\x1b[31m red") == "Pia\\x1b[31m red"  # ESC would start an ANSI sequence
    assert printable("line\nbreak") == "line\\nbreak"
    assert printable("abc\u202edef") == "abc\\u202edef"  # RIGHT-TO-LEFT OVERRIDE (Unicode Cf)
    assert printable("bad\udcffbyte") == "bad\\udcffbyte"  # a lone surrogate from undecodable input
    assert printable("a\u2028b") == "a\\u2028b"  # LINE SEPARATOR (Unicode Zl)


def test_letters_and_every_kind_of_space_stay_as_typed():
    for text in (NAME, "Inês Conceição", "Zoë\u2009O'Brien", "李小龍", "Ngozi\u202fAdeyemi", "[bold]x[/]"):
        assert printable(text) == text


def test_a_quoted_value_is_shortened_past_its_limit():
    assert quoted("x" * 100, limit=10) == "'" + "x" * 9 + "…'"


@given(st.text())
def test_nothing_inert_survives_and_clean_text_is_unchanged(text):
    shown = printable(text)
    assert not any(unicodedata.category(ch) in INERT_CATEGORIES for ch in shown)
    if not any(unicodedata.category(ch) in INERT_CATEGORIES for ch in text):
        assert shown == text


@given(st.text())
def test_the_interface_shows_what_the_command_line_prints(text):
    assert literal(text).plain == printable(text)


async def test_a_no_break_space_name_prints_the_same_in_the_cli_and_the_interface(tmp_path):
    db = str(tmp_path / "c.db")

    def cli(*args):
        return CliRunner().invoke(main, ["--db", db, *args], obj=REAL)

    assert cli("init", "--admin", "ada", "--name", "Ada Admin").exit_code == 0
    added = cli("patient", "add", "P0001", "--name", NAME, "--born", "1991-04-02")
    assert added.exit_code == 0
    with Clinic.open(db, Identity(os_account()), date_of_record=REAL) as clinic:
        stored = clinic.patient_record("P0001").patient.name
        shown = printable(stored)
        assert shown in added.stdout and shown in cli("list").stdout
        app = make_app(clinic, refresh_seconds=60)
        async with app.run_test(size=(120, 30)) as pilot:
            await settle(pilot)
            cell = app.screen.query_one("#caseload").get_cell("P0001", "patient").plain
    assert shown in cell


def test_text_python_calls_printable_holds_nothing_inert_in_any_code_point():
    # The sanitiser passes printable text through as it is (str.isprintable, checked in C): that is
    # safe only if no code point it accepts is of an inert category, by the Unicode database itself.
    accepted = (chr(c) for c in range(sys.maxunicode + 1))
    assert not [ch for ch in accepted if ch.isprintable() and unicodedata.category(ch) in INERT_CATEGORIES]
