"""The alert and protocol commands through click's runner: output, JSON keys, refusals with exit 1."""

from __future__ import annotations

import json

import pytest

JSON_KEYS = {"id", "patient", "kind", "severity", "state", "raised_on", "due", "message", "evidence", "source",
             "rule", "handled_by", "handled_at", "note", "snooze_until"}  # fmt: skip


@pytest.fixture
def clinic(clinic):
    """The base clinic, with a fever logged yesterday by the phone clerk."""
    done = clinic("--as", "phil", "log", "P0001", "temp", "38.4", "--on", "yesterday")
    assert "Raised: fever (today)" in done.output  # 38.0 C or more (common practice)
    return clinic


def refused(result, fragment: str) -> None:
    assert result.exit_code == 1
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and fragment in lines[0], result.stderr


def test_alerts_json_has_the_contract_keys(clinic):
    (alert,) = json.loads(clinic("alerts", "--json").output)
    assert JSON_KEYS <= alert.keys()
    assert (alert["patient"], alert["kind"], alert["severity"], alert["state"]) == ("P0001", "fever", "today", "open")
    assert alert["evidence"] == {"day": "2026-11-30", "celsius": 38.4, "threshold_c": 38.0, "flags": [], "protocol_version": 1}
    assert alert["source"] == "common practice" and alert["clinical"] is True


def test_alerts_table_and_filters(clinic):
    table = clinic("alerts")
    assert table.exit_code == 0 and "fever" in table.output and "Supports, does not replace" in table.output
    assert json.loads(clinic("alerts", "--json", "--kind", "logging-gap").output) == []
    assert len(json.loads(clinic("alerts", "--json", "--nurse", "nell").output)) == 1
    assert clinic("alerts", "--kind", "fevers").exit_code == 2


def test_alerts_why_words_each_alerts_evidence(clinic):
    shown = clinic("alerts", "--why")
    # 38.0 C and above is a fever (common practice); the reading was 38.4 C on 30 Nov.
    assert shown.exit_code == 0 and "1 P0001 fever:" in shown.output
    assert "  38.40 °C on 30 Nov, at or above the fever threshold of 38.00 °C." in shown.output
    assert "celsius" not in shown.output and "threshold_c" not in shown.output


def test_refresh_prints_what_it_did(clinic):
    result = clinic("alerts", "--refresh")
    assert result.exit_code == 0 and "Refreshed 1 patients: 0 alerts raised or escalated, 0 auto-resolved." in result.output
    quiet = clinic("alerts", "--refresh", "--json")
    assert json.loads(quiet.stdout)[0]["kind"] == "fever" and "Refreshed 1 patients" in quiet.stderr


def test_ack_snooze_resolve(clinic):
    done = clinic("--as", "nell", "ack", "1", "--note", "called: flu")
    assert done.exit_code == 0 and "Alert 1 (P0001 fever) acknowledged by nell." in done.output
    snoozed = clinic("--as", "nell", "snooze", "1", "--until", "+2", "--note", "recheck Thursday")
    assert "snoozed until 2026-12-03 by nell" in snoozed.output
    (alert,) = json.loads(clinic("alerts", "--json", "--state", "all").output)
    assert (alert["state"], alert["snooze_until"], alert["note"]) == ("snoozed", "2026-12-03", "recheck Thursday")
    assert clinic("--as", "nell", "resolve", "1", "--note", "recovered").exit_code == 0
    refused(clinic("--as", "nell", "ack", "1", "--note", "x"), "alert 1 is resolved (by nell): nothing left to do")


@pytest.mark.parametrize(
    "args, fragment",
    [
        (("--as", "phil", "ack", "1", "--note", "x"), "fever is a clinical alert: a nurse, supervisor or admin handles it"),
        (("--as", "nell", "ack", "1"), "fever is a clinical alert: say what was done with --note"),
        (("--as", "nell", "snooze", "1", "--until", "2026-11-30", "--note", "x"), "is not after today"),
        (("--as", "nell", "resolve", "7", "--note", "x"), "no alert '7'"),
    ],
)
def test_handling_refusals_exit_1_and_change_nothing(clinic, args, fragment):
    before = clinic("alerts", "--json", "--state", "all").output
    refused(clinic(*args), fragment)
    assert clinic("alerts", "--json", "--state", "all").output == before


def test_protocol_show_lists_every_setting_with_default_and_source(clinic):
    shown = clinic("protocol", "show")
    assert shown.exit_code == 0 and "Protocol version 1, set by system at " in shown.output
    assert "(defaults): 0 settings differ from the defaults." in shown.output
    assert "short_luteal_max_days" in shown.output and "ASRM 2021" in shown.output
    assert "Files for 'protocol use': flat 'name = value' lines" in shown.output


def test_protocol_check_and_use(clinic, tmp_path):
    good = tmp_path / "clinic.toml"
    good.write_text("fever_c = 38.5\n", encoding="utf-8")
    checked = clinic("protocol", "check", str(good))
    assert checked.exit_code == 0 and "valid; overrides fever_c = 38.5." in checked.output
    refused(clinic("--as", "nell", "protocol", "use", str(good)), "may not change the clinic protocol")
    used = clinic("protocol", "use", str(good))
    assert used.exit_code == 0 and "1 auto-resolved" in used.output  # 38.4 C is no fever at 38.5
    assert "Protocol version 2 in use (1 settings differ from the defaults)." in used.output
    shown = clinic("protocol", "show").output
    assert "38.5 *" in shown and "Protocol version 2, set by ada at " in shown


@pytest.mark.parametrize(
    "text, fragment",
    [
        ("fever_c = 41\n", "fever_c = 41 is outside 37.5-39.5"),
        ("fever = 38\n", "unknown setting 'fever': known settings are"),
        ("fever_c = \"high\"\n", 'fever_c = "high" is not a number'),
        ("fever_c 38\n", "not valid TOML"),
    ],
)
def test_protocol_check_refuses_a_bad_file_in_one_line(clinic, tmp_path, text, fragment):
    bad = tmp_path / "protocol.toml"
    bad.write_text(text, encoding="utf-8")
    refused(clinic("protocol", "check", str(bad)), f"{bad}: {fragment}")
    refused(clinic("protocol", "use", str(bad)), fragment)


def test_the_store_keeps_the_protocol_when_its_file_goes_bad_and_export_gives_it_back(clinic, tmp_path):
    path = tmp_path / "clinic.toml"
    path.write_text("fever_c = 37.8\n", encoding="utf-8")
    assert clinic("protocol", "use", str(path)).exit_code == 0
    path.write_text("fever_c = 99\n", encoding="utf-8")
    shown = clinic("protocol", "show")
    assert shown.exit_code == 0 and "37.8 *" in shown.output
    listed = clinic("alerts")
    assert listed.exit_code == 0 and listed.stderr == ""
    out = tmp_path / "exported.toml"
    exported = clinic("protocol", "export", str(out))
    assert exported.exit_code == 0 and f"Protocol version 2 written to {out}." in exported.output
    assert "fever_c = 37.8" in out.read_text(encoding="utf-8")
    refused(clinic("protocol", "export", str(out)), "already exists")


def test_a_protocol_that_would_clear_most_alerts_is_refused_in_one_line(clinic, tmp_path):
    for days_ago in range(2, 7):  # five more fevers (38.0 C: common practice), six in all
        assert clinic("log", "P0001", "temp", "38.3", "--on", f"-{days_ago}").exit_code == 0
    path = tmp_path / "clinic.toml"
    path.write_text("fever_c = 39.0\n", encoding="utf-8")
    before = clinic("alerts", "--json", "--state", "all").output
    refused(clinic("protocol", "use", str(path)), "refresh stopped: it would auto-resolve 6 of the 6 unresolved alerts")
    assert clinic("alerts", "--json", "--state", "all").output == before
    assert "Protocol version 1," in clinic("protocol", "show").output
