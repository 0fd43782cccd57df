"""The store's own commands at the command line when the file is not what it should be: an empty file
(only `init` makes a store), a full disk (one line, no half-made store left), a damaged store (a
check report of a few lines, a restore that works)."""

from __future__ import annotations

import stat
import subprocess

import pytest
from click.testing import CliRunner

from caseload.application.clinic import Clinic, Identity
from caseload.application.identity import os_account
from caseload.cli import main
from caseload.cli.store_commands import INTEGRITY_SHOWN
from tests.cli.conftest import DATE_OF_RECORD
from tests.robustness.robust_support import damage_index_page


def cli(db, *args):
    return CliRunner().invoke(main, ["--db", str(db), *args], obj=DATE_OF_RECORD, env={})


def one_line(result, says: str) -> None:
    assert (result.exit_code, result.stdout) == (1, ""), result.output
    assert result.stderr == f"caseload: {says}\n"


@pytest.mark.parametrize("command", [("list",), ("check",), ("backup", "b.db"), ("staff", "list")])
def test_a_command_on_an_empty_file_makes_no_store_of_it_and_init_then_can(tmp_path, command):
    path = tmp_path / "e.db"
    path.touch(mode=0o644)
    result = cli(path, *(str(tmp_path / a) if a.endswith(".db") else a for a in command))
    assert result.exit_code == 1 and len(result.stderr.splitlines()) == 1 and "Traceback" not in result.output
    assert [p.name for p in tmp_path.iterdir()] == ["e.db"] and not path.stat().st_size
    made = cli(path, "init", "--admin", "ada", "--name", "Ada Admin")
    assert made.exit_code == 0, made.output
    assert stat.S_IMODE(path.stat().st_mode) == 0o600


def test_list_says_what_the_empty_file_is(tmp_path):
    path = tmp_path / "e.db"
    path.touch()
    one_line(cli(path, "list"), f"{path} is empty, not a caseload store: make one with 'caseload init --admin ID "
                                "--name NAME', or give the store's path")


def test_init_on_a_full_disk_leaves_nothing_to_block_the_next_try(small_disk):
    small = small_disk("64k")
    path = small / "s.db"
    one_line(cli(path, "init", "--admin", "ada", "--name", "Ada Admin"),
             f"the disk holding {path} is full: nothing was saved; free space and try again")
    assert list(small.iterdir()) == []  # the file it had made, removed
    subprocess.run(["mount", "-o", "remount,size=1m", str(small)], check=True)
    done = cli(path, "init", "--admin", "ada", "--name", "Ada Admin")
    assert done.exit_code == 0, done.output


def test_check_on_a_damaged_store_names_a_few_findings_and_counts_the_rest(demo, tmp_path):
    copy = tmp_path / "copy.db"
    demo.store.backup(copy)
    with Clinic.open(copy, Identity(demo.admin.os_account), date_of_record=DATE_OF_RECORD) as clinic:
        clinic.map_account(demo.admin.id, os_account())  # check is for admins and supervisors
    damage_index_page(copy)
    result = cli(copy, "check")
    assert result.exit_code == 1
    lines = result.stdout.splitlines()
    assert lines[0].startswith("integrity: Page ")
    assert [line.split(":")[0] for line in lines[1:INTEGRITY_SHOWN]] == ["  also"] * (INTEGRITY_SHOWN - 1)
    assert lines[INTEGRITY_SHOWN].startswith("  and ") and lines[INTEGRITY_SHOWN].endswith(
        " more findings of SQLite's integrity check")
    assert lines[INTEGRITY_SHOWN + 1:] == [
        "schema version: " + lines[INTEGRITY_SHOWN + 1].split(": ")[1],
        "nothing else checked: the file is damaged; restore a backup with 'caseload restore FILE'"]
    assert "\\n" not in result.output and len(result.stderr.splitlines()) == 1


def test_a_refused_init_leaves_an_empty_file_empty(tmp_path):
    """The schema is written before the first admin is checked: a refused admin undoes it."""
    path = tmp_path / "e.db"
    path.touch()
    one_line(cli(path, "init", "--admin", "bad id", "--name", "Ada Admin"),
             "staff id 'bad id' not accepted: use 1-32 letters, digits, '.', '_' or '-'")
    assert [p.name for p in tmp_path.iterdir()] == ["e.db"] and not path.stat().st_size
    assert cli(path, "init", "--admin", "ada", "--name", "Ada Admin").exit_code == 0
