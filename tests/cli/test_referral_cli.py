"""`caseload pack` and `caseload fhir` through click's runner: permissions, audit, owner-only files, refusals."""

from __future__ import annotations

import json
import stat

import pytest

from caseload.store import Store


@pytest.fixture
def charted(clinic):
    """The CLI clinic, with two cycles of P0001's entries logged by the phone clerk."""
    for on, kind, value in (("2026-10-20", "bleed", "heavy"), ("2026-10-21", "temp", "36.4"),
                            ("2026-11-17", "bleed", "moderate"), ("2026-11-18", "temp", "36.45"),
                            ("2026-11-19", "hcg", "negative"), ("2026-11-20", "scan", "12 10 endo 6")):
        assert clinic("--as", "phil", "log", "P0001", kind, value, "--on", on).exit_code == 0
    return clinic


def audit_rows(run, action: str):
    with Store(run.db) as store:
        return store.audit.rows(action)


def owner_only(path) -> bool:
    return stat.S_IMODE(path.stat().st_mode) == 0o600


@pytest.mark.parametrize("name", ["pack.pdf", "pack.html"])
def test_a_nurse_makes_a_pack_written_owner_only_and_audited(charted, tmp_path, name):
    out = tmp_path / name
    done = charted("--as", "nell", "pack", "P0001", "--out", str(out))
    assert done.exit_code == 0, done.output
    assert done.output.strip() == f"Referral pack for P0001 written to {out}."
    assert owner_only(out) and out.stat().st_size > 1000
    (row,) = audit_rows(charted, "referral.pack")
    assert (row.by_staff, row.row_id) == ("nell", "P0001")
    assert sorted(p.name for p in tmp_path.iterdir() if p.name.startswith(".")) == []  # no staged file left


def test_phone_staff_are_refused_and_nothing_is_written(charted, tmp_path):
    out = tmp_path / "pack.pdf"
    done = charted("--as", "phil", "pack", "P0001", "--out", str(out))
    assert done.exit_code == 1
    assert done.output.strip() == "caseload: phone staff may not make a referral pack: it needs nurse or supervisor or admin"
    assert not out.exists() and audit_rows(charted, "referral.pack") == []


@pytest.mark.parametrize("args, message", [
    (("--out", "{dir}/pack.docx"), "--out 'pack.docx' must end in .pdf or .html"),
    (("--out", "{dir}/missing/pack.pdf"), "does not exist: create it first or choose another path"),
    (("--out", "{dir}/pack.pdf", "--paper", "a5"), None),
])
def test_bad_pack_arguments_get_one_line(charted, tmp_path, args, message):
    done = charted("pack", "P0001", *(a.format(dir=tmp_path) for a in args))
    assert done.exit_code in (1, 2)
    if message:
        assert done.exit_code == 1 and message in done.output and len(done.output.strip().splitlines()) == 1
    assert not (tmp_path / "pack.pdf").exists()


def test_an_existing_file_is_kept_unless_forced(charted, tmp_path):
    out = tmp_path / "pack.html"
    out.write_text("keep me")
    done = charted("pack", "P0001", "--out", str(out))
    assert done.exit_code == 1
    assert done.output == f"caseload: {out} exists already: choose a new file, or add --force to replace it\n"
    assert out.read_text() == "keep me"
    assert charted("pack", "P0001", "--out", str(out), "--force").exit_code == 0
    assert "<svg" in out.read_text() and owner_only(out)


def test_an_unknown_patient_is_one_line(charted, tmp_path):
    done = charted("pack", "P9999", "--out", str(tmp_path / "x.pdf"))
    assert done.exit_code == 1 and done.output.strip() == "caseload: no patient 'P9999': see 'caseload list'"


def test_fhir_export_of_one_patient_and_of_all(charted, tmp_path):
    one = tmp_path / "one.json"
    done = charted("--as", "nell", "fhir", "P0001", "--out", str(one))
    assert done.exit_code == 0, done.output
    bundle = json.loads(one.read_text())
    kinds = [e["resource"]["resourceType"] for e in bundle["entry"]]
    assert kinds.count("Patient") == 1 and kinds.count("Observation") >= 6 and owner_only(one)
    assert done.output.strip() == f"FHIR R4 bundle ({len(kinds)} resources) written to {one}."
    everyone = tmp_path / "all.json"
    assert charted("fhir", "--all", "--out", str(everyone), "--deidentify").exit_code == 0
    text = everyone.read_text()
    assert "Pia Test" not in text and "1991-04-02" not in text
    rows = audit_rows(charted, "fhir.export")
    assert [(r.by_staff, r.row_id) for r in rows] == [("nell", "P0001"), ("ada", "*")]


def test_fhir_since_filters_entries(charted, tmp_path):
    out = tmp_path / "since.json"
    assert charted("fhir", "P0001", "--out", str(out), "--since", "2026-11-17").exit_code == 0
    days = [e["resource"]["effectiveDateTime"][:10] for e in json.loads(out.read_text())["entry"]
            if e["resource"]["id"].startswith("entry-")]
    assert sorted(days) == ["2026-11-17", "2026-11-18", "2026-11-19", "2026-11-20"]


@pytest.mark.parametrize("args, code", [
    (("fhir", "P0001", "--all"), 2),
    (("fhir",), 2),
    (("fhir", "P0001", "--since", "2026-13-01"), 1),
    (("--as", "phil", "fhir", "P0001"), 1),
])
def test_bad_fhir_arguments_are_refused_with_nothing_written(charted, tmp_path, args, code):
    out = tmp_path / "x.json"
    done = charted(*args, "--out", str(out))
    assert done.exit_code == code
    assert not out.exists() and audit_rows(charted, "fhir.export") == []


@pytest.mark.parametrize("name", ["bundle.xml", "bundle", "bundle.json.txt", "bundle.ndjson"])
def test_a_fhir_file_not_named_json_is_refused_in_one_line(charted, tmp_path, name):
    # Reported: `fhir P0001 --out x.xml` wrote JSON into a file named .xml.
    out = tmp_path / "out" / name
    out.parent.mkdir()
    done = charted("fhir", "P0001", "--out", str(out))
    assert done.exit_code == 1
    assert done.output == "caseload: FHIR bundles are written as JSON: give a file name ending in .json\n"
    assert list(out.parent.iterdir()) == [] and audit_rows(charted, "fhir.export") == []
    out.write_text("kept")  # nor over a file of that name, even with --force
    assert charted("fhir", "P0001", "--out", str(out), "--force").exit_code == 1 and out.read_text() == "kept"


def test_a_fhir_file_named_json_in_capitals_is_written(charted, tmp_path):
    out = tmp_path / "BUNDLE.JSON"
    assert charted("fhir", "P0001", "--out", str(out)).exit_code == 0
    assert json.loads(out.read_text())["resourceType"] == "Bundle"


@pytest.mark.parametrize("command, action", [(("pack", "P0001", "--out", "{dir}/p.html"), "referral.pack"),
                                             (("fhir", "P0001", "--out", "{dir}/p.json"), "fhir.export")])
def test_a_view_of_another_day_exports_that_day_audited_with_the_date_of_record(charted, tmp_path, command, action):
    # The date rule: an export is a view, allowed as of any day; its audit row keeps the real date.
    done = charted("--as", "nell", "--today", "2026-11-18", *(a.format(dir=tmp_path) for a in command))
    assert done.exit_code == 0, done.output
    (row,) = audit_rows(charted, action)
    assert row.day_of_record == "2026-12-01" and json.loads(row.after)["as_of"] == "2026-11-18"
    if action == "referral.pack":
        assert "<dt>Prepared</dt><dd>2026-11-18 by Nell Nurse</dd>" in (tmp_path / "p.html").read_text()
