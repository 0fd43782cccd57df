"""Start-up: a command imports what it uses. `list --json` in a fresh interpreter loads no interface,
exporter or template library; every command name still reaches its command."""

from __future__ import annotations

import importlib
import json
import subprocess
import sys

import pytest

from caseload.cli import COMMAND_MODULES, main

# Libraries only the interface, terminal tables, the exports, the weekly summary and the referral pack
# use (common practice: a scriptable read should not pay for them).
NOT_FOR_LIST = ("textual", "rich", "jinja2", "xlsxwriter", "fpdf", "pendulum", "caseload.tui", "caseload.exports",
                "caseload.application.weekly_summary", "caseload.application.referral", "sqlite_utils")  # fmt: skip
# Runs the command, then prints the names of the modules it loaded on stderr's last line.
WRAPPER = (
    "import atexit, json, sys\n"
    "atexit.register(lambda: print(json.dumps(sorted(sys.modules)), file=sys.stderr))\n"
    "from caseload.cli import main\n"
    "main(sys.argv[1:])\n"
)


def loaded_by(*args: str) -> set[str]:
    done = subprocess.run([sys.executable, "-c", WRAPPER, *args], capture_output=True, text=True, timeout=120,
                          stdin=subprocess.DEVNULL)  # fmt: skip
    assert done.returncode == 0, done.stderr
    return set(json.loads(done.stderr.strip().splitlines()[-1]))


def test_list_json_loads_no_interface_exporter_or_template_library(clinic):
    clinic("log", "P0001", "temp", "36.40", "--on", "yesterday")
    modules = loaded_by("--db", clinic.db, "--today", "2026-12-01", "list", "--json")
    assert "caseload.cli.patient_commands" in modules  # the command did run
    heavy = sorted(m for m in modules if m.split(".")[0] in NOT_FOR_LIST or m.startswith(NOT_FOR_LIST))
    assert heavy == []
    assert not {"caseload.cli.summary_commands", "caseload.cli.referral_commands"} & modules


def test_every_command_name_maps_to_its_module_and_each_command_is_listed_once():
    found = {}
    for module in sorted(set(COMMAND_MODULES.values())):
        for command in importlib.import_module(f"caseload.cli.{module}").COMMANDS:
            assert command.name not in found, f"{command.name} is defined twice"
            found[command.name] = module
    assert found == COMMAND_MODULES


@pytest.mark.parametrize("name", ["list", "summary", "fhir", "demo"])
def test_help_lists_the_lazily_loaded_commands(name):
    from click.testing import CliRunner

    result = CliRunner().invoke(main, ["--help"])
    assert result.exit_code == 0 and f"  {name} " in result.output
    assert main.get_command(None, "no-such-command") is None
