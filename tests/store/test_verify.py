"""`check`'s verification against the audit: alert handling and the audited store settings edited
with plain SQL are found; SQLite's integrity findings come one line each. Real SQLite files."""

from __future__ import annotations

import json
import sqlite3

import pytest

from caseload.application.staff import init_store
from caseload.store import Store
from caseload.store.backup_restore import check_file
from tests.robustness.robust_support import damage_index_page
from tests.robustness.test_tamper_evidence import sql


def rows(path, query: str) -> list[tuple]:
    conn = sqlite3.connect(path)
    try:
        return conn.execute(query).fetchall()
    finally:
        conn.close()


@pytest.fixture
def copy(demo, tmp_path):
    """A copy of the demo caseload, whose alerts were raised, escalated, handled and resolved by the tool."""
    path = tmp_path / "copy.db"
    demo.store.backup(path)
    assert check_file(path).ok, check_file(path).first_problem()
    return path


def test_forged_alert_handling_is_found(copy):
    urgent = rows(copy, "SELECT id, state, note, handled_by FROM alert WHERE severity = 'urgent' ORDER BY id")
    sql(copy, "UPDATE alert SET state = 'resolved', note = 'fine', handled_by = 'ines' WHERE severity = 'urgent'")
    report = check_file(copy)
    assert not report.ok
    forged = {}
    for alert_id, state, note, by in urgent:
        changed = [name for name, was, now in (("state", state, "resolved"), ("handled_by", by, "ines"),
                                               ("note", note, "fine")) if was != now]
        if changed:
            forged[alert_id] = f"alert {alert_id} differs from its latest audit row ({', '.join(changed)})"
    assert forged  # the demo has urgent alerts still open
    assert [p for p in report.unaudited if p.startswith("alert ")] == list(forged.values())


def test_an_alert_quietly_downgraded_is_found(copy):
    ((alert_id,),) = rows(copy, "SELECT min(id) FROM alert WHERE severity = 'urgent'")
    sql(copy, f"UPDATE alert SET severity = 'info' WHERE id = {alert_id}")
    assert check_file(copy).unaudited == (f"alert {alert_id} differs from its latest audit row (severity)",)


@pytest.fixture
def fresh(tmp_path):
    path = tmp_path / "s.db"
    with Store(path) as store:
        init_store(store, "ada", "Ada Admin", "tester")
    return path


def test_the_pseudonym_secret_is_audited_by_its_digest_alone(fresh):
    ((secret,),) = rows(fresh, "SELECT value FROM meta WHERE key = 'pseudonym_secret'")
    ((after,),) = rows(fresh, "SELECT after FROM audit WHERE action = 'store.init'")
    assert set(json.loads(after)) == {"timezone", "pseudonym_secret_sha256"}
    assert secret not in after and check_file(fresh).ok


@pytest.mark.parametrize("edit, found", [
    ("UPDATE meta SET value = 'UTC' WHERE key = 'timezone'", "meta timezone differs from its latest audit row"),
    ("UPDATE meta SET value = 'known' WHERE key = 'pseudonym_secret'",
     "meta pseudonym_secret differs from its latest audit row"),
    ("DELETE FROM meta WHERE key = 'pseudonym_secret'", "meta pseudonym_secret differs from its latest audit row"),
], ids=["time zone", "secret replaced", "secret removed"])
def test_an_audited_setting_edited_behind_the_tools_back_is_found(fresh, edit, found):
    sql(fresh, edit)
    assert check_file(fresh).unaudited == (found,)


def test_integrity_findings_are_one_line_each(copy):
    """SQLite puts many findings in one row, the first opening with '*** in database main ***'."""
    damage_index_page(copy)
    findings = check_file(copy).integrity
    assert len(findings) > 3
    assert all(f and "\n" not in f and not f.startswith("***") for f in findings)
