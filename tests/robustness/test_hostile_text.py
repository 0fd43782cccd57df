"""SQL fragments and terminal escape sequences are data: stored byte for byte, shown escaped."""

from __future__ import annotations

import csv
import io
import json

import pytest

from tests.robustness.robust_support import assert_clean_exit, snapshot

HOSTILE = [
    "'; DROP TABLE entry; --",
    "Robert'); DELETE FROM audit WHERE 1=1; --",
    "\x1b[2J\x1b[H cleared",
    "\x1b]0;x\x07 retitled",
    "\x1b[31mred\x1b[0m [bold]markup[/bold]",
    "\u202eright-to-left override",
    "tab\tand\u0007bell",
]


@pytest.mark.parametrize("text", HOSTILE)
def test_hostile_text_from_the_command_line_is_stored_verbatim_and_shown_escaped(clinic, text):
    tables = set(snapshot(clinic.db))
    logged = clinic("log", "P0001", "symptom", text, "--note", text)
    assert_clean_exit(logged)
    assert logged.exit_code == 0 and "\x1b" not in logged.stdout, logged.output
    added = clinic("patient", "add", "P0002", "--name", text, "--born", "1990-01-01")
    assert "\x1b" not in added.stdout, added.output
    # A name is typed, not pasted from a terminal: control characters and a direction override are
    # refused in one line (and nothing is written); SQL fragments are only text, and stored.
    refused = any((ord(c) < 32 and c not in "\t\n\r") or c == "\u202e" for c in text)
    assert added.exit_code == (1 if refused else 0), added.output
    if refused:
        assert len(added.output.strip().splitlines()) == 1
    shown = json.loads(clinic("entries", "P0001", "--json").output)[-1]
    assert (shown["raw"], shown["value"], shown["note"]) == (text.strip(), text.strip(), text.strip())
    stored = snapshot(clinic.db)
    assert set(stored) == tables
    entry = stored["entry"][-1]
    assert (entry[5], entry[9], entry[11]) == (text.strip(), text.strip(), text.strip())  # raw, text, note
    names = [row[1] for row in stored["patient"]]
    assert (" ".join(text.split()) in names) is not refused
    for command in (("entries", "P0001"), ("list",), *([] if refused else [("show", "P0002")])):
        out = clinic(*command)
        assert out.exit_code == 0, out.output
        assert "\x1b" not in out.stdout and "\x07" not in out.stdout, command


@pytest.mark.parametrize("text", HOSTILE)
def test_hostile_text_through_csv_import_is_stored_verbatim(clinic, tmp_path, text):
    out = io.StringIO()
    writer = csv.writer(out)
    writer.writerow(["patient", "day", "kind", "value", "note"])
    writer.writerow(["P0001", "-2", "note", text, text])
    writer.writerow(["P0001", "-1", "med", text, ""])
    path = tmp_path / "hostile.csv"
    path.write_text(out.getvalue(), encoding="utf-8")
    before = snapshot(clinic.db)
    result = clinic("import", str(path))
    assert result.exit_code == 0, result.output
    after = snapshot(clinic.db)
    assert set(after) == set(before) and len(after["audit"]) > len(before["audit"])
    first, second = after["entry"][-2:]
    assert (first[5], first[11], second[5]) == (text.strip(), text.strip(), text.strip())
    listing = clinic("entries", "P0001")
    assert listing.exit_code == 0 and "\x1b" not in listing.stdout


@pytest.mark.parametrize("text", HOSTILE)
def test_hostile_text_in_a_refusal_is_one_escaped_line(clinic, text):
    before = snapshot(clinic.db)
    for args in (("log", text, "temp", "36.5"), ("log", "P0001", text, "36.5"), ("void", text, "--reason", "x"),
                 ("--as", text, "list"), ("show", text)):
        result = clinic(*args)
        assert_clean_exit(result)
        assert result.exit_code == 1 and "\x1b" not in result.stderr and "\x07" not in result.stderr, args
    assert snapshot(clinic.db) == before
