"""Without a terminal the full-screen interface never starts: one line on stderr, exit code 2, nothing written."""

from __future__ import annotations

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
    assert "Demo caseload of" in result.output
