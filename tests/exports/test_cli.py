"""`caseload pack` and `caseload fhir` through click's runner: permissions, audit, owner-only files, refusals."""

from __future__ import annotations

import json
import stat

import pytest
from click.testing import CliRunner

from caseload.cli import main
from caseload.store import Store

TODAY = "2026-12-01"


@pytest.fixture
def run(tmp_path):
    db = str(tmp_path / "cli.db")
    runner = CliRunner()

    def invoke(*args):
        return runner.invoke(main, ["--db", db, "--today", TODAY, *args], catch_exceptions=False)

    invoke.db = db
    return invoke


@pytest.fixture
def clinic(run):
    """An admin, a nurse and a phone clerk; patient P0001 of the nurse's with two cycles of entries."""
    for args in (("init", "--admin", "ada", "--name", "Ada Admin"),
                 ("staff", "add", "nell", "--name", "Nell Nurse", "--role", "nurse"),
                 ("staff", "add", "phil", "--name", "Phil Phone", "--role", "phone"),
                 ("patient", "add", "P0001", "--name", "Pia Test", "--born", "1991-04-02", "--nurse", "nell")):
        assert run(*args).exit_code == 0
    for on, kind, value in (("2026-10-20", "bleed", "heavy"), ("2026-10-21", "temp", "36.4"),
                            ("2026-11-17", "bleed", "moderate"), ("2026-11-18", "temp", "36.45"),
                            ("2026-11-19", "hcg", "negative"), ("2026-11-20", "scan", "12 10 endo 6")):
        assert run("--as", "phil", "log", "P0001", kind, value, "--on", on).exit_code == 0
    return run


def audit_rows(run, action: str):
    with Store(run.db) as store:
        return store.audit.rows(action)


def owner_only(path) -> bool:
    return stat.S_IMODE(path.stat().st_mode) == 0o600


@pytest.mark.parametrize("name", ["pack.pdf", "pack.html"])
def test_a_nurse_makes_a_pack_written_owner_only_and_audited(clinic, tmp_path, name):
    out = tmp_path / name
    done = clinic("--as", "nell", "pack", "P0001", "--out", str(out))
    assert done.exit_code == 0, done.output
    assert done.output.strip() == f"Referral pack for P0001 written to {out}."
    assert owner_only(out) and out.stat().st_size > 1000
    (row,) = audit_rows(clinic, "referral.pack")
    assert (row.by_staff, row.row_id) == ("nell", "P0001")
    assert sorted(p.name for p in tmp_path.iterdir() if p.name.startswith(".")) == []  # no staged file left


def test_phone_staff_are_refused_and_nothing_is_written(clinic, tmp_path):
    out = tmp_path / "pack.pdf"
    done = clinic("--as", "phil", "pack", "P0001", "--out", str(out))
    assert done.exit_code == 1
    assert done.output.strip() == "caseload: phone staff may not make a referral pack: it needs nurse or supervisor or admin"
    assert not out.exists() and audit_rows(clinic, "referral.pack") == []


@pytest.mark.parametrize("args, message", [
    (("--out", "{dir}/pack.docx"), "--out 'pack.docx' must end in .pdf or .html"),
    (("--out", "{dir}/missing/pack.pdf"), "does not exist: create it first or choose another --out"),
    (("--out", "{dir}/pack.pdf", "--paper", "a5"), None),
])
def test_bad_pack_arguments_get_one_line(clinic, tmp_path, args, message):
    done = clinic("pack", "P0001", *(a.format(dir=tmp_path) for a in args))
    assert done.exit_code in (1, 2)
    if message:
        assert done.exit_code == 1 and message in done.output and len(done.output.strip().splitlines()) == 1
    assert not (tmp_path / "pack.pdf").exists()


def test_an_existing_file_is_kept_unless_forced(clinic, tmp_path):
    out = tmp_path / "pack.html"
    out.write_text("keep me")
    done = clinic("pack", "P0001", "--out", str(out))
    assert done.exit_code == 1 and "exists: choose another --out, or add --force" in done.output
    assert out.read_text() == "keep me"
    assert clinic("pack", "P0001", "--out", str(out), "--force").exit_code == 0
    assert "<svg" in out.read_text() and owner_only(out)


def test_an_unknown_patient_is_one_line(clinic, tmp_path):
    done = clinic("pack", "P9999", "--out", str(tmp_path / "x.pdf"))
    assert done.exit_code == 1 and done.output.strip() == "caseload: no patient 'P9999': see 'caseload list'"


def test_fhir_export_of_one_patient_and_of_all(clinic, tmp_path):
    one = tmp_path / "one.json"
    done = clinic("--as", "nell", "fhir", "P0001", "--out", str(one))
    assert done.exit_code == 0, done.output
    bundle = json.loads(one.read_text())
    kinds = [e["resource"]["resourceType"] for e in bundle["entry"]]
    assert kinds.count("Patient") == 1 and kinds.count("Observation") >= 6 and owner_only(one)
    assert done.output.strip() == f"FHIR R4 bundle ({len(kinds)} resources) written to {one}."
    everyone = tmp_path / "all.json"
    assert clinic("fhir", "--all", "--out", str(everyone), "--deidentify").exit_code == 0
    text = everyone.read_text()
    assert "Pia Test" not in text and "1991-04-02" not in text
    rows = audit_rows(clinic, "fhir.export")
    assert [(r.by_staff, r.row_id) for r in rows] == [("nell", "P0001"), ("ada", "*")]


def test_fhir_since_filters_entries(clinic, tmp_path):
    out = tmp_path / "since.json"
    assert clinic("fhir", "P0001", "--out", str(out), "--since", "2026-11-17").exit_code == 0
    days = [e["resource"]["effectiveDateTime"][:10] for e in json.loads(out.read_text())["entry"]
            if e["resource"]["id"].startswith("entry-")]
    assert sorted(days) == ["2026-11-17", "2026-11-18", "2026-11-19", "2026-11-20"]


@pytest.mark.parametrize("args, code", [
    (("fhir", "P0001", "--all"), 2),
    (("fhir",), 2),
    (("fhir", "P0001", "--since", "2026-13-01"), 1),
    (("--as", "phil", "fhir", "P0001"), 1),
])
def test_bad_fhir_arguments_are_refused_with_nothing_written(clinic, tmp_path, args, code):
    out = tmp_path / "x.json"
    done = clinic(*args, "--out", str(out))
    assert done.exit_code == code
    assert not out.exists() and audit_rows(clinic, "fhir.export") == []
