"""Without a terminal the full-screen interface never starts: one line on stderr, exit code 2, nothing written."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

NEEDS_TERMINAL = "caseload: the interface needs a terminal: run caseload in one, or give a command"


@pytest.mark.parametrize("args", [(), ("demo",)], ids=["no command", "demo"])
def test_a_redirected_run_refuses_the_interface(tmp_path, args):
    """A real process with stdout into a file and no keyboard, as in a script or a cron job."""
    store = tmp_path / "store.db"
    out = tmp_path / "out.txt"
    with open(out, "wb") as stdout:
        done = subprocess.run([sys.executable, "-m", "caseload", "--db", str(store), *args], stdout=stdout,
                              stderr=subprocess.PIPE, stdin=subprocess.DEVNULL, timeout=120)
    assert done.returncode == 2
    assert done.stderr.decode().splitlines() == [NEEDS_TERMINAL + " (caseload --help lists them)"]
    assert out.read_bytes() == b""  # no escape codes in the file
    assert not store.exists()  # the demo was not built either


def test_demo_without_the_interface_still_runs_redirected(run):
    result = run("demo", "--no-ui")
    assert result.exit_code == 0, result.output
    assert "Built the demo caseload of" in result.output


def notes_of(run, patient: str) -> list[str]:
    return [e["note"] or e["value"] for e in json.loads(run("entries", patient, "--json").output) if e["kind"] == "note"]


def test_demo_run_again_opens_what_was_left_and_fresh_rebuilds_it(run):
    assert run("demo", "--no-ui").exit_code == 0
    assert run("log", "P0004", "note", "called back, kept in the demo").exit_code == 0
    again = run("demo", "--no-ui")
    assert again.exit_code == 0, again.output
    first_line = again.output.splitlines()[0]
    assert first_line == (f"Opening the demo as you left it ({run.db}); 'caseload demo --fresh' rebuilds it "
                          "dated from today.")
    assert "called back, kept in the demo" in notes_of(run, "P0004")
    fresh = run("demo", "--no-ui", "--fresh")
    assert fresh.exit_code == 0, fresh.output
    assert fresh.output.startswith("Rebuilt the demo caseload from the start of ")
    assert "called back, kept in the demo" not in notes_of(run, "P0004")


def test_demo_never_opens_or_replaces_a_store_that_is_not_a_demo(run):
    assert run("init", "--admin", "ada", "--name", "Ada Admin").exit_code == 0
    for args in (("demo", "--no-ui"), ("demo", "--no-ui", "--fresh")):
        refused = run(*args)
        assert refused.exit_code == 1
        assert "exists and is not a demo store: the demo never replaces it, give another --db" in refused.output
