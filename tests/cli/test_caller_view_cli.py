"""What a phone clerk reads of a clinical alert through the command line: the caller's view (kind,
severity, state, dates, the protocol's words for the caller), never its evidence, rule or message;
a nurse reading the same store still gets every number. Permissions are checked by the application
layer, so `--json` and `--why` obey them as the interface does."""

from __future__ import annotations

import json

import pytest

from caseload.core.settings import DEFAULT_PROTOCOL
from tests.cli.test_pregnancy_cli import CHART as HCG_CHART  # serum hCG 120 -> 150 IU/L in 48 h

CALLER = DEFAULT_PROTOCOL.caller_message
FEVER_EVIDENCE = {"day": "2026-11-30", "celsius": 38.4, "threshold_c": 38.0, "flags": [], "protocol_version": 1}


def fever(clinic, tmp_path) -> list[str]:
    """38.4 C logged by the clerk: a fever at 38.0 C or more (common practice)."""
    assert clinic("--as", "phil", "log", "P0001", "temp", "38.4", "--on", "yesterday").exit_code == 0
    return ["38.4", "38.40", "38.0", "celsius", "threshold"]


def slow_hcg(clinic, tmp_path) -> list[str]:
    """A serum hCG pair rising 25% per 48 h, under the 53% minimum of Barnhart 2004 (the protocol default)."""
    (tmp_path / "hcg.csv").write_text(HCG_CHART)
    assert clinic("import", str(tmp_path / "hcg.csv")).exit_code == 0
    return ["120", "150", "25%", "53%", "Barnhart", "rise_48h", "IU/L"]


@pytest.fixture(params=[fever, slow_hcg], ids=["fever", "hcg-rise-low"])
def charted(request, clinic, tmp_path):
    """The clinic with one clinical alert open, the nurse's view of it, and the evidence values in it."""
    hidden = request.param(clinic, tmp_path)
    (alert,) = json.loads(clinic("--as", "nell", "alerts", "--json").stdout)
    return clinic, alert, hidden


def no_clinical_side(text: str, alert: dict, hidden: list[str]) -> None:
    assert alert["message"] not in text
    for value in hidden:
        assert value not in text, value


def test_alerts_json_for_a_clerk_is_the_callers_view_with_every_key(charted):
    clinic, nursed, hidden = charted
    out = clinic("--as", "phil", "alerts", "--json").stdout
    (alert,) = json.loads(out)
    assert alert.keys() == nursed.keys()  # the JSON keys are a contract: the same for every role
    assert (alert["message"], alert["evidence"], alert["rule"], alert["source"]) == (CALLER, {}, "", "")
    kept = ("id", "patient", "kind", "severity", "state", "raised_on", "due", "clinical", "key", "caution")
    assert {k: alert[k] for k in kept} == {k: nursed[k] for k in kept}
    no_clinical_side(out, nursed, hidden)


def test_alerts_why_for_a_clerk_gives_the_words_for_the_caller(charted):
    clinic, nursed, hidden = charted
    shown = clinic("--as", "phil", "alerts", "--why")
    assert shown.exit_code == 0
    assert f"Tell the caller: {CALLER}" in " ".join(shown.stdout.split())  # the table wraps; the words stay
    no_clinical_side(shown.stdout, nursed, hidden)


def test_show_and_list_json_for_a_clerk_carry_the_callers_words(charted):
    clinic, nursed, hidden = charted
    out = clinic("--as", "phil", "show", "P0001", "--json").stdout
    (brief,) = json.loads(out)["alerts"]
    assert brief == {"id": nursed["id"], "kind": nursed["kind"], "severity": nursed["severity"],
                     "state": "open", "due": nursed["due"], "message": CALLER}
    assert nursed["message"] not in out
    listed = clinic("--as", "phil", "list", "--json").stdout
    assert json.loads(listed)[0]["top_alert"]["message"] == CALLER and nursed["message"] not in listed


RISING_HCG = """patient,day,kind,value,time
P0001,2026-11-01,bleed,moderate,
P0001,2026-11-02,bleed,moderate,
P0001,2026-11-28,hcg,120,09:00
P0001,2026-11-30,hcg,150,09:00
"""


def test_show_gives_a_clerk_the_pregnancy_without_the_hcg_trend_and_every_key(clinic, tmp_path):
    (tmp_path / "hcg.csv").write_text(RISING_HCG)
    assert clinic("import", str(tmp_path / "hcg.csv")).exit_code == 0
    nursed = json.loads(clinic("--as", "nell", "show", "P0001", "--json").stdout)["pregnancy"]
    clerked = json.loads(clinic("--as", "phil", "show", "P0001", "--json").stdout)["pregnancy"]
    # Log-linear: 150 / 120 = 1.25 in 48 h, a rise of 25%, doubling in 48 h x ln 2 / ln 1.25 = 6.21 days
    # (Barnhart 2004 reads the rise per 48 h; stdlib math for the figures).
    assert (nursed["hcg_rise_48h"], nursed["hcg_doubling_days"]) == (0.25, 6.21)
    # The JSON keys are a contract: the same for every role, the interpretation null for the clerk.
    assert clerked == nursed | {"hcg_rise_48h": None, "hcg_doubling_days": None}
    text = clinic("--as", "phil", "show", "P0001").stdout
    assert "Pregnancy: EDD" in text and "25%" not in text and "6.21" not in text


def test_a_nurse_still_reads_the_whole_alert(clinic, tmp_path):
    fever(clinic, tmp_path)
    (alert,) = json.loads(clinic("--as", "nell", "alerts", "--json").stdout)
    assert alert["evidence"] == FEVER_EVIDENCE and alert["source"] == "common practice"  # 38.0 C: common practice
    assert "38.4" in alert["message"] and alert["rule"]
    why = clinic("--as", "nell", "alerts", "--why").stdout
    assert "  38.40 °C on 30 Nov, at or above the fever threshold of 38.00 °C." in why and "Tell the caller" not in why
    (brief,) = json.loads(clinic("--as", "nell", "show", "P0001", "--json").stdout)["alerts"]
    assert brief["message"] == alert["message"]


def test_a_nurses_handling_note_stays_with_clinical_staff(clinic, tmp_path):
    fever(clinic, tmp_path)
    note = "rang her: 38.9 this evening, sent to the ward"
    assert clinic("--as", "nell", "ack", "1", "--note", note).exit_code == 0
    (alert,) = json.loads(clinic("--as", "phil", "alerts", "--json", "--state", "all").stdout)
    assert (alert["state"], alert["handled_by"], alert["note"]) == ("acknowledged", "nell", None)
    for args in (("alerts", "--state", "all", "--why"), ("alerts", "--json", "--state", "all"), ("show", "P0001")):
        assert "38.9" not in clinic("--as", "phil", *args).stdout
    assert json.loads(clinic("--as", "nell", "alerts", "--json", "--state", "all").stdout)[0]["note"] == note
