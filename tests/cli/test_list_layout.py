"""`caseload list` in a terminal: the columns that fit its width, and severity that reads without colour."""

from __future__ import annotations

import re

from rich.cells import cell_len

from tests.cli.test_pregnancy_cli import CHART as PREGNANCY

# The early pregnancy with a slow hCG rise (urgent), and a patient with a fever today (today).
CHART = PREGNANCY + """P0002,2026-11-20,bleed,heavy,
P0002,2026-11-21,bleed,heavy,
P0002,2026-12-01,temp,38.6,
"""
ESCAPE = re.compile(r"\x1b\[[0-9;]*m")


def listed(clinic, tmp_path, columns: int, **env) -> str:
    """The list as a terminal `columns` wide shows it (rich takes the width from COLUMNS)."""
    chart = tmp_path / "chart.csv"
    chart.write_text(CHART)
    if clinic("entries", "P0002").exit_code != 0:
        assert clinic("patient", "add", "P0002", "--name", "Siobhan Keane", "--born", "1988-02-02").exit_code == 0
        assert clinic("import", str(chart)).exit_code == 0
        assert clinic("alerts", "--refresh").exit_code == 0
    done = clinic("list", env={"COLUMNS": str(columns), "TTY_COMPATIBLE": "1", **env})
    assert done.exit_code == 0, done.output
    return done.output


def header(output: str) -> list[str]:
    return next(ESCAPE.sub("", line).split() for line in output.splitlines() if "patient" in line and "name" in line)


def test_at_80_columns_cycle_day_and_days_quiet_stay_and_names_are_whole(clinic, tmp_path):
    out = listed(clinic, tmp_path, 80)
    assert header(out) == ["patient", "name", "day", "phase", "alert", "next", "quiet"]
    plain = ESCAPE.sub("", out)
    assert all(cell_len(line) <= 80 for line in plain.splitlines())
    assert "Siobhan Keane" in plain and "Pia Test" in plain
    # P0002's cycle started with the heavy flow on 20 Nov: 1 Dec is cycle day 12
    # (day 1 = the first day of flow, common practice).
    row = next(line for line in plain.splitlines() if line.startswith("P0002"))
    assert " 12 " in row


def test_plan_and_nurse_come_in_at_120_columns(clinic, tmp_path):
    assert header(listed(clinic, tmp_path, 119))[-1] == "quiet"
    assert header(listed(clinic, tmp_path, 120))[-2:] == ["plan", "nurse"]
    assert "window" in header(listed(clinic, tmp_path, 160))


def test_without_colour_urgent_is_reversed_and_today_bold(clinic, tmp_path):
    out = listed(clinic, tmp_path, 80, NO_COLOR="1")
    assert "\x1b[1;7murgent" in out  # bold and reverse, no colour code
    assert "\x1b[1mtoday" in out  # the fever on P0002
