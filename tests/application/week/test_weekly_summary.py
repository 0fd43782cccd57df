"""Exporting: who may, what each export records, what a refusal leaves (nothing), and de-identification."""

from __future__ import annotations

import hashlib
import hmac
import json
import re
import zipfile
from pathlib import Path

import openpyxl
import pytest

from caseload.exports.summary_files import write
from caseload.core.parse import InputError
from caseload.exports import summary_files as render
from caseload.application.errors import Refused
from caseload.application.weekly_summary import compute_summary, export_summary, pseudonym
from tests.application.week.conftest import PATIENTS, W43, W44

OUT = {"xlsx": "s.xlsx", "html": "s.html", "json": "s.json", "csv": "s-csv"}


def _exports(clinic) -> list:
    return [r for r in clinic.store.audit.rows("summary.export")]


def _leftovers(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir())


@pytest.mark.parametrize("fmt", list(OUT))
def test_each_export_is_audited_once_with_who_week_format_and_mode(fresh_clinic, tmp_path, fmt):
    out = tmp_path / "out"
    out.mkdir()
    path = export_summary(fresh_clinic.context("super1"), W43, fmt, out / OUT[fmt], deidentify=False, render=write)
    assert path == out / OUT[fmt] and path.exists()
    (row,) = _exports(fresh_clinic)
    assert (row.by_staff, row.action, row.table, row.row_id) == ("super1", "summary.export", "summary", "2026-W43")
    assert json.loads(row.after) == {"week": "2026-W43", "format": fmt, "deidentified": False, "path": str(path),
                                     "as_of": "2026-11-10"}
    assert _leftovers(out) == [OUT[fmt]]  # nothing staged is left behind
    assert path.stat().st_mode & 0o777 == (0o700 if fmt == "csv" else 0o600)


def test_admins_may_export_too(fresh_clinic, tmp_path):
    export_summary(fresh_clinic.context("admin1"), W43, "json", tmp_path / "s.json", deidentify=True, render=write)
    (row,) = _exports(fresh_clinic)
    assert row.by_staff == "admin1" and json.loads(row.after)["deidentified"] is True


@pytest.mark.parametrize("staff", ["phone1", "nurse1"])
@pytest.mark.parametrize("fmt", list(OUT))
def test_phone_and_nurse_staff_are_refused_and_nothing_is_written(fresh_clinic, tmp_path, staff, fmt):
    audit_rows = fresh_clinic.store.audit.count()
    with pytest.raises(Refused, match="may not export the weekly summary: it needs supervisor or admin"):
        export_summary(fresh_clinic.context(staff), W43, fmt, tmp_path / OUT[fmt], deidentify=False, render=write)
    assert fresh_clinic.store.audit.count() == audit_rows
    assert not any(p.name != "clinic.db" and not p.name.startswith("clinic.db-") for p in tmp_path.iterdir())


def test_phone_staff_cannot_compute_the_summary_either(fresh_clinic):
    with pytest.raises(Refused):
        compute_summary(fresh_clinic.context("phone1"), W43)


@pytest.mark.parametrize(
    "week, fmt, out, words",
    [
        ("2026-48", "json", "s.json", "week '2026-48' not understood: use YYYY-Www"),
        ("2025-W53", "json", "s.json", "2025 has ISO weeks W01 to W52"),
        ("2026-W47", "json", "s.json", "week 2026-W47 starts on 2026-11-16, after today (2026-11-10)"),
        (W43, "pdf", "s.pdf", "format 'pdf' not known: use one of xlsx, html, csv, json"),
        (W43, "json", "missing/s.json", "does not exist: create it first"),
        (W43, "xlsx", ".", "is a folder: give a file path for xlsx"),
        (W43, "csv", "taken.txt", "is a file: csv is written as a folder of files"),
    ],
)
def test_bad_requests_are_refused_in_one_line_and_nothing_is_written(fresh_clinic, tmp_path, week, fmt, out, words):
    (tmp_path / "taken.txt").write_text("keep me")
    before = _leftovers(tmp_path)
    audit_rows = fresh_clinic.store.audit.count()
    with pytest.raises(InputError) as refused:
        export_summary(fresh_clinic.context(), week, fmt, tmp_path / out, deidentify=False, render=write)
    assert words in str(refused.value) and "\n" not in str(refused.value)
    assert fresh_clinic.store.audit.count() == audit_rows
    assert _leftovers(tmp_path) == before
    assert (tmp_path / "taken.txt").read_text() == "keep me"


def test_a_failed_render_leaves_no_file_and_no_audit_row(fresh_clinic, tmp_path, monkeypatch):
    def broken(summary, path):
        path.write_text("half")
        raise OSError("disk full")

    monkeypatch.setitem(render.WRITERS, "html", broken)
    audit_rows = fresh_clinic.store.audit.count()
    with pytest.raises(OSError):
        export_summary(fresh_clinic.context(), W43, "html", tmp_path / "s.html", deidentify=False, render=write)
    assert fresh_clinic.store.audit.count() == audit_rows
    assert not (tmp_path / "s.html").exists()
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".partial")]


def test_a_store_without_a_secret_cannot_de_identify(fresh_clinic, tmp_path):
    fresh_clinic.store.db.conn.execute("DELETE FROM meta WHERE key = 'pseudonym_secret'")
    with pytest.raises(Refused, match="no pseudonym secret"):
        export_summary(fresh_clinic.context(), W43, "json", tmp_path / "s.json", deidentify=True, render=write)
    assert not (tmp_path / "s.json").exists()


def test_pseudonyms_are_a_keyed_hash_of_the_patient_id():
    # Reference: RFC 2104 HMAC with SHA-256, from the standard library's hmac module.
    digest = hmac.new(b"k3y", b"P1", hashlib.sha256).hexdigest()
    assert pseudonym("k3y", "P1") == "px-" + digest[:10]
    assert pseudonym("k3y", "P1") != pseudonym("another store", "P1")


def _all_text(path: Path) -> str:
    """Everything a file or folder holds, as text (an xlsx is a zip of XML parts)."""
    if path.is_dir():
        return "\n".join(_all_text(p) for p in sorted(path.iterdir()))
    if path.suffix == ".xlsx":
        with zipfile.ZipFile(path) as z:
            return "\n".join(z.read(n).decode("utf-8") for n in z.namelist())
    return path.read_text(encoding="utf-8")


def _values(path: Path) -> str:
    """What a reader sees: for an xlsx its cell values (its XML has cell references such as P3)."""
    if path.suffix != ".xlsx":
        return _all_text(path)
    book = openpyxl.load_workbook(path)
    return "\n".join(str(v) for sheet in book for row in sheet.iter_rows(values_only=True) for v in row if v)


@pytest.fixture
def deidentified_paths(fresh_clinic, tmp_path):
    ctx = fresh_clinic.context()
    return {(week, fmt): export_summary(ctx, week, fmt, tmp_path / f"{week}-{OUT[fmt]}", deidentify=True, render=write)
            for week in (W43, W44) for fmt in OUT}


@pytest.fixture
def deidentified_exports(deidentified_paths):
    return {key: _all_text(path) for key, path in deidentified_paths.items()}


def _identifying(born) -> list[str]:
    return [born.isoformat(), born.strftime("%d/%m/%Y"), born.strftime("%d.%m.%Y")]


def test_de_identified_exports_hold_no_name_birth_date_or_patient_id(deidentified_paths):
    for (week, fmt), path in deidentified_paths.items():
        text, values = _all_text(path), _values(path)
        for pid, (name, born, *_) in PATIENTS.items():
            for word in [name, *name.split(), *_identifying(born)]:
                assert word not in text, (week, fmt, pid, word)
            assert not re.search(rf"(?<![\w-]){pid}(?!\w)", values), (week, fmt, pid)
        assert "[removed]" in values or week == W44  # W43's void reason named a patient


def test_identified_exports_do_name_patients(fresh_clinic, tmp_path):
    text = _all_text(export_summary(fresh_clinic.context(), W43, "html", tmp_path / "s.html", deidentify=False, render=write))
    assert "Aurelia Quennell" in text and "logged for Bryony Tallisker by mistake" in text


def test_the_same_patient_has_the_same_pseudonym_in_two_weeks(fresh_clinic, deidentified_exports):
    secret = fresh_clinic.store.db.meta("pseudonym_secret")
    p1 = pseudonym(secret, "P1")
    w43 = json.loads(deidentified_exports[(W43, "json")])
    w44 = json.loads(deidentified_exports[(W44, "json")])
    assert {"patient": p1, "event": "shift-confirmed", "day": "2026-10-22"} in w43["clinical"]["events"]["rows"]
    assert [r["patient"] for r in w44["clinical"]["pregnancies"]["rows"]] == [p1]
    assert "name" not in w43["clinical"]["events"]["rows"][0]
    for fmt in OUT:
        assert p1 in deidentified_exports[(W43, fmt)] and p1 in deidentified_exports[(W44, fmt)], fmt


def test_de_identified_exports_keep_staff_ids(deidentified_exports):
    text = deidentified_exports[(W43, "html")]
    assert all(staff in text for staff in ("phone1", "nurse1", "nurse2", "super1"))


def test_free_text_is_escaped_in_the_page(fresh_clinic, tmp_path):
    c = fresh_clinic
    entry = c.log("2026-10-21 08:00", "phone1", "P1", "note", "called", "2026-10-21")
    c.void("2026-10-21 09:00", "nurse1", entry, "<script>alert(1)</script> & more")
    page = export_summary(c.context(), W43, "html", tmp_path / "s.html", deidentify=False, render=write).read_text()
    assert "<script>" not in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt; &amp; more" in page


@pytest.mark.parametrize(
    "text, scrubbed",
    [
        ("called Mary-Jane O'Brien back", "called [removed]-[removed] O'[removed] back"),
        ("spoke to OBRIEN, mary jane", "spoke to [removed], [removed] [removed]"),
        ("born 14/03/1990 (1990-03-14); entered 2026-10-19", "born [removed] ([removed]); entered 2026-10-19"),
        ("Li Na rang; Lina did not", "[removed] [removed] rang; Lina did not"),
        ("typo: 37.10 for 36.71", "typo: 37.10 for 36.71"),
    ],
)
def test_free_text_loses_patient_names_and_birth_dates(text, scrubbed):
    from datetime import date

    from caseload.core.model import Patient
    from caseload.application.week.pseudonyms import text_scrubber

    scrub = text_scrubber([Patient("P1", "Mary-Jane O'Brien", date(1990, 3, 14), None),
                           Patient("P2", "Li Na", date(1988, 7, 2), None)])
    assert scrub(text) == scrubbed
