"""Exports can neither destroy data nor leak it: protected targets, private staging, one-line
failures, inert cells, and de-identified files without free text, patient ids or calendar dates."""

from __future__ import annotations

import csv
import errno
import hashlib
import os
import re
import signal
import socket
import stat
import subprocess
import tempfile
import zipfile
from contextlib import closing, contextmanager
from datetime import date, timedelta
from pathlib import Path

import openpyxl
import pytest
from click.testing import CliRunner
from hypothesis import HealthCheck, Phase, given, settings
from hypothesis import strategies as st

from caseload.application.errors import Refused
from caseload.application.protocol import protocol_in_use
from caseload.application.weekly_summary import export_summary
from caseload.cli import main
from caseload.exports import summary_files as render
from caseload.exports.summary_files import write
from caseload.presentation.safe_text import printable, spreadsheet_text
from caseload.exports.summary_csv import _writer
from caseload.store import Store, StoreError
from tests.application.week.conftest import PATIENTS, TODAY, W43, Clock, build

FORMULA_SIGNS = "=+-@"
BIDI = "\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069\u200e\u200f\u061c"


def _digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.fixture
def run(fresh_clinic):
    runner = CliRunner()

    def invoke(*args):
        return runner.invoke(main, ["--db", str(fresh_clinic.store.path), "--today", TODAY.isoformat(), *args], obj=TODAY)

    return invoke


# --- what an export may not replace


@pytest.mark.parametrize("suffix", ["", "-wal", "-shm"])
def test_the_store_and_its_companion_files_are_refused(run, fresh_clinic, suffix):
    store = fresh_clinic.store.path
    target = Path(f"{store}{suffix}")
    before = _digest(store)
    done = run("summary", "--week", W43, "--format", "json", "--out", str(target), "--force")
    assert done.exit_code == 1 and len(done.output.splitlines()) == 1, done.output
    assert "is the store itself" in done.output
    assert _digest(store) == before and not fresh_clinic.store.audit.rows("summary.export")


def test_a_path_that_leads_to_the_store_by_another_name_is_refused(run, fresh_clinic, tmp_path):
    (tmp_path / "sub").mkdir()
    link = tmp_path / "summary.json"
    link.symlink_to(fresh_clinic.store.path)
    for out in (link, tmp_path / "sub" / ".." / fresh_clinic.store.path.name):
        done = run("summary", "--week", W43, "--format", "json", "--out", str(out), "--force")
        assert done.exit_code == 1 and "is the store itself" in done.output, done.output
    assert Store(fresh_clinic.store.path).staff.get("admin1") is not None


def test_a_backup_is_refused_even_with_force(run, fresh_clinic, tmp_path):
    backup = tmp_path / "monday.bak"
    assert run("backup", str(backup)).exit_code == 0
    before = _digest(backup)
    done = run("summary", "--week", W43, "--format", "html", "--out", str(backup), "--force")
    assert done.exit_code == 1
    assert done.output == f"caseload: {backup} is an SQLite database (a store or a backup): an export never overwrites it\n"
    assert _digest(backup) == before


def test_an_existing_file_is_kept_unless_force(run, tmp_path):
    out = tmp_path / "w43.json"
    out.write_text("last week's notes")
    done = run("summary", "--week", W43, "--format", "json", "--out", str(out))
    assert done.exit_code == 1
    assert done.output == f"caseload: {out} exists already: choose a new file, or add --force to replace it\n"
    assert out.read_text() == "last week's notes"
    assert run("summary", "--week", W43, "--format", "json", "--out", str(out), "--force").exit_code == 0
    assert out.read_text().startswith("{")


def test_a_csv_folder_with_files_of_the_same_names_is_kept_unless_force(run, tmp_path):
    folder = tmp_path / "csv"
    assert run("summary", "--week", W43, "--format", "csv", "--out", str(folder)).exit_code == 0
    (folder / "week.csv").write_text("edited")
    done = run("summary", "--week", W43, "--format", "csv", "--out", str(folder))
    assert done.exit_code == 1 and "week.csv exists already" in done.output
    assert (folder / "week.csv").read_text() == "edited"
    assert run("summary", "--week", W43, "--format", "csv", "--out", str(folder), "--force").exit_code == 0
    assert (folder / "week.csv").read_text(encoding="utf-8-sig").startswith("week,")


# --- every export, one check: the store, its companions, a backup, anything but a regular file

# Each command that writes a path the user chooses, with the suffix its file takes; {out} is the target.
EXPORTS = {
    "summary json": (("summary", "--week", W43, "--format", "json", "--out", "{out}", "--force"), ".json"),
    "summary xlsx": (("summary", "--week", W43, "--format", "xlsx", "--out", "{out}", "--force"), ".xlsx"),
    "summary html": (("summary", "--week", W43, "--format", "html", "--out", "{out}", "--force"), ".html"),
    "pack pdf": (("pack", "P1", "--out", "{out}", "--force"), ".pdf"),
    "pack html": (("pack", "P1", "--out", "{out}", "--force"), ".html"),
    "fhir": (("fhir", "P1", "--out", "{out}", "--force"), ".json"),
    "protocol export": (("protocol", "export", "{out}"), ".toml"),
}
EXPORT_ACTIONS = ("summary.export", "referral.pack", "fhir.export")
SUFFIX_BOUND = ("pack", "fhir")  # the exports that refuse a name without their own suffix, before all else


def _export(run, name: str, out: Path):
    args, _ = EXPORTS[name]
    return run(*(a.format(out=out) for a in args))


def _refused_in_one_line(done, words: str) -> None:
    assert done.exit_code == 1, done.output
    assert len(done.output.splitlines()) == 1 and done.output.startswith("caseload: "), done.output
    assert words in done.output and "Traceback" not in done.output


def _nothing_exported(fresh_clinic) -> None:
    assert not [r for action in EXPORT_ACTIONS for r in fresh_clinic.store.audit.rows(action)]


@pytest.mark.parametrize("name", list(EXPORTS))
@pytest.mark.parametrize("companion", ["", "-wal", "-shm", "-journal"])
def test_no_export_writes_over_the_store_or_its_companions_even_with_force(run, fresh_clinic, tmp_path, name,
                                                                        companion):
    store = fresh_clinic.store.path
    wal = Path(f"{store}-wal")
    before = _digest(store), _digest(wal)
    # The companion by its own name where the export takes any name; always through a link named as
    # the export's files are (the pack takes only .pdf and .html, the FHIR export only .json).
    link = tmp_path / f"handy{EXPORTS[name][1]}"
    link.symlink_to(f"{store}{companion}")
    targets = [link] if name.startswith(SUFFIX_BOUND) else [Path(f"{store}{companion}"), link]
    for out in targets:
        _refused_in_one_line(_export(run, name, out), "is the store itself: an export never overwrites it")
    assert (_digest(store), _digest(wal)) == before
    assert not Path(f"{store}-journal").exists()
    assert Store(store).staff.get("admin1") is not None
    _nothing_exported(fresh_clinic)


@pytest.mark.parametrize("name", list(EXPORTS))
def test_no_export_writes_over_a_backup_or_a_link_to_one(run, fresh_clinic, tmp_path, name):
    backup = tmp_path / f"monday{EXPORTS[name][1]}"
    assert run("backup", str(backup)).exit_code == 0
    link = tmp_path / f"latest{EXPORTS[name][1]}"
    link.symlink_to(backup)
    before = _digest(backup)
    _refused_in_one_line(_export(run, name, backup),
                         f"caseload: {backup} is an SQLite database (a store or a backup): an export never overwrites it")
    _refused_in_one_line(_export(run, name, link), f"caseload: {link} is a symbolic link, not a regular file")
    assert _digest(backup) == before and link.is_symlink() and link.resolve() == backup
    _nothing_exported(fresh_clinic)


@contextmanager
def _no_hang(seconds: int):
    """Fail the test, instead of waiting forever, if something opens a named pipe that has no writer."""

    def stop(signum, frame):
        raise AssertionError(f"the export was still running after {seconds} s: it opened a pipe")

    before = signal.signal(signal.SIGALRM, stop)
    signal.alarm(seconds)
    try:
        yield
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, before)


@pytest.mark.parametrize("name", list(EXPORTS))
def test_a_device_a_pipe_a_socket_or_a_link_is_refused_and_left_as_it_is(run, fresh_clinic, tmp_path, name):
    suffix = EXPORTS[name][1]
    pipe, sock, link, regular = (tmp_path / f"{stem}{suffix}" for stem in ("pipe", "sock", "link", "regular"))
    os.mkfifo(pipe)
    listener = socket.socket(socket.AF_UNIX)
    listener.bind(str(sock))
    regular.write_text("kept")
    link.symlink_to(regular)
    cases = {pipe: "a named pipe", sock: "a socket", link: "a symbolic link"}
    if not name.startswith(SUFFIX_BOUND):  # the pack takes only .pdf and .html, the FHIR export only .json
        cases[Path("/dev/stdout")] = "a symbolic link"  # to the terminal, or the pipe the output goes to
    # /dev/null is a character device: one of our own, where this account may make one.
    device = tmp_path / f"null{suffix}"
    if os.geteuid() == 0:
        os.mknod(device, 0o600 | stat.S_IFCHR, os.makedev(1, 3))  # the null device's numbers (Linux)
        cases[device] = "a device"
    kinds = {path: stat.S_IFMT(os.lstat(path).st_mode) for path in cases}
    with closing(listener), _no_hang(30):
        for target, kind in cases.items():
            _refused_in_one_line(_export(run, name, target),
                                 f"caseload: {target} is {kind}, not a regular file: an export writes a new file "
                                 "or replaces a regular one, choose another path")
    assert {path: stat.S_IFMT(os.lstat(path).st_mode) for path in cases} == kinds
    assert regular.read_text() == "kept"
    assert [p.name for p in tmp_path.iterdir() if p.name.endswith(".partial")] == []
    _nothing_exported(fresh_clinic)


def test_the_real_dev_null_is_refused_before_anything_is_written(run, fresh_clinic):
    # Reported as root: `summary --format xlsx --out /dev/null --force` made /dev/null a regular file.
    done = run("summary", "--week", W43, "--format", "xlsx", "--out", "/dev/null", "--force")
    _refused_in_one_line(done, "caseload: /dev/null is a device, not a regular file")
    assert stat.S_ISCHR(os.lstat("/dev/null").st_mode)
    _nothing_exported(fresh_clinic)


@pytest.mark.parametrize("name", list(EXPORTS))
def test_every_export_is_owner_only_and_says_where_without_letting_the_path_act_on_the_terminal(run, tmp_path, name):
    # Reported: `--out $'esc/a\e]0;PWN\a.json'` set the terminal's title when the line was printed.
    folder = tmp_path / "esc"
    folder.mkdir()
    out = folder / f"a\x1b]0;PWN\x07{EXPORTS[name][1]}"
    done = _export(run, name, out)
    assert done.exit_code == 0, done.output
    shown = f"{folder}/a\\x1b]0;PWN\\x07{EXPORTS[name][1]}"  # the escapes as text, by the one display rule
    assert f" written to {shown}" in done.output and printable(str(out)) == shown
    assert "\x1b" not in done.output and "\x07" not in done.output
    assert stat.S_IMODE(out.stat().st_mode) == 0o600 and out.stat().st_size > 0


def test_the_exported_protocol_names_its_version_whole(run, fresh_clinic, tmp_path):
    # Reported: the comment line was cut at 60 characters ("...set by system at 2026-1…").
    in_use = protocol_in_use(fresh_clinic.store)
    out = tmp_path / "protocol.toml"
    assert run("protocol", "export", str(out)).exit_code == 0
    first = out.read_text(encoding="utf-8").splitlines()[0]
    assert first == f"# caseload clinic protocol version {in_use.version}, set by {in_use.set_by} at {in_use.set_at}"
    assert len(first) > 60 and not first.endswith("…")


# --- a CSV folder holds one export, whole, or nothing new


def test_a_de_identified_csv_export_forced_over_an_identified_one_leaves_none_of_its_files(run, fresh_clinic,
                                                                                           tmp_path):
    # Reported: the identified export's quality-reasons.csv (free-text reasons) stayed in the folder.
    c = fresh_clinic
    entry = c.log("2026-10-21 08:00", "phone1", "P1", "note", "called", "2026-10-21")
    c.void("2026-10-21 09:00", "nurse1", entry, "wrong patient, Aurelia's sister")
    mixed, alone = tmp_path / "mix.csv", tmp_path / "alone"
    assert run("summary", "--week", W43, "--format", "csv", "--out", str(mixed)).exit_code == 0
    assert "Aurelia's sister" in (mixed / "quality-reasons.csv").read_text(encoding="utf-8-sig")
    done = run("summary", "--week", W43, "--format", "csv", "--out", str(mixed), "--deidentify", "--force")
    assert done.exit_code == 0, done.output
    assert run("summary", "--week", W43, "--format", "csv", "--out", str(alone), "--deidentify").exit_code == 0
    names = sorted(p.name for p in mixed.iterdir())
    assert names == sorted(p.name for p in alone.iterdir()) and "quality-reasons.csv" not in names
    assert all((mixed / n).read_bytes() == (alone / n).read_bytes() for n in names)
    assert "Aurelia" not in "".join((mixed / n).read_text(encoding="utf-8-sig") for n in names)


def test_an_earlier_exports_file_alone_is_kept_unless_force(run, tmp_path):
    folder = tmp_path / "csv"
    folder.mkdir()
    (folder / "quality-reasons.csv").write_text("reason,corrections,voids\nsomeone's words,0,1\n")
    (folder / "notes.txt").write_text("not an export's")
    done = run("summary", "--week", W43, "--format", "csv", "--out", str(folder), "--deidentify")
    assert done.exit_code == 1
    assert done.output == (f"caseload: {folder / 'quality-reasons.csv'} exists already: choose a new file, "
                           "or add --force to replace it\n")
    assert sorted(p.name for p in folder.iterdir()) == ["notes.txt", "quality-reasons.csv"]
    assert run("summary", "--week", W43, "--format", "csv", "--out", str(folder), "--deidentify", "--force").exit_code == 0
    names = {p.name for p in folder.iterdir()}
    assert "quality-reasons.csv" not in names and "notes.txt" in names and "week.csv" in names  # others' files stay


def _disk_full_at(monkeypatch, failing: int) -> None:
    """The `failing`-th CSV file of an export meets a full disk, after those before it were written."""
    real = render.csv_files

    def files(summary):
        def full(path: Path) -> None:
            raise OSError(errno.ENOSPC, "No space left on device")

        listed = real(summary)
        name, _ = listed[failing]
        return [*listed[:failing], (name, full), *listed[failing + 1:]]

    monkeypatch.setattr(render, "csv_files", files)


def test_a_csv_export_failing_midway_leaves_no_folder(fresh_clinic, tmp_path, monkeypatch):
    _disk_full_at(monkeypatch, 3)
    out = tmp_path / "csv"
    with pytest.raises(Refused, match=f"^the disk is full while writing {out}/.*: nothing was written"):
        export_summary(fresh_clinic.context(), W43, "csv", out, deidentify=False, render=write)
    assert not out.exists() and not [p.name for p in tmp_path.iterdir() if p.name.startswith(".")]
    assert not fresh_clinic.store.audit.rows("summary.export")


def test_a_forced_csv_export_failing_midway_leaves_the_earlier_one_as_it_was(fresh_clinic, tmp_path, monkeypatch):
    out = tmp_path / "csv"
    export_summary(fresh_clinic.context(), W43, "csv", out, deidentify=False, render=write)
    before = {p.name: p.read_bytes() for p in out.iterdir()}
    _disk_full_at(monkeypatch, 3)
    with pytest.raises(Refused, match="the disk is full"):
        export_summary(fresh_clinic.context(), W43, "csv", out, deidentify=True, render=write, force=True)
    assert {p.name: p.read_bytes() for p in out.iterdir()} == before
    assert len(fresh_clinic.store.audit.rows("summary.export")) == 1


# --- how the file is written


@pytest.mark.parametrize("fmt, name", [("html", "s.html"), ("json", "s.json"), ("xlsx", "s.xlsx")])
def test_the_content_is_written_to_a_private_file_beside_the_target_then_renamed(fresh_clinic, tmp_path,
                                                                                 monkeypatch, fmt, name):
    seen = []
    real = render.WRITERS[fmt]

    def watching(summary, path: Path) -> None:
        mode = stat.S_IMODE(path.stat().st_mode)
        seen.append((path.parent, path.name, mode, (tmp_path / name).exists()))
        real(summary, path)

    monkeypatch.setitem(render.WRITERS, fmt, watching)
    old_umask = os.umask(0)  # the temporary file is private whatever the umask
    try:
        out = export_summary(fresh_clinic.context(), W43, fmt, tmp_path / name, deidentify=False, render=write)
    finally:
        os.umask(old_umask)
    [(folder, temp_name, mode, published_early)] = seen
    assert folder == tmp_path and temp_name.startswith(f".{name}.") and temp_name.endswith(".partial")
    assert mode == 0o600 and not published_early
    assert stat.S_IMODE(out.stat().st_mode) == 0o600
    assert sorted(p.name for p in tmp_path.iterdir() if p.name.startswith(f".{name}")) == []


def test_a_temporary_name_taken_by_someone_else_is_never_opened(fresh_clinic, tmp_path, monkeypatch):
    """O_EXCL: a file planted at the temporary name (a link to elsewhere) is not written through."""
    victim = tmp_path / "victim.txt"
    victim.write_text("keep")
    monkeypatch.setattr("caseload.application.safe_file.secrets.token_hex", lambda n: "fixed")
    (tmp_path / ".s.json.fixed.partial").symlink_to(victim)
    with pytest.raises(Refused, match="failed \\(File exists\\)"):
        export_summary(fresh_clinic.context(), W43, "json", tmp_path / "s.json", deidentify=False, render=write)
    assert victim.read_text() == "keep" and not (tmp_path / "s.json").exists()


def test_a_file_system_without_hard_links_still_gets_its_file(fresh_clinic, tmp_path, monkeypatch):
    def no_links(source, target):
        raise OSError(errno.EPERM, "Operation not permitted")  # what FAT answers

    monkeypatch.setattr("caseload.application.safe_file.os.link", no_links)
    out = export_summary(fresh_clinic.context(), W43, "json", tmp_path / "s.json", deidentify=False, render=write)
    assert out.read_text().startswith("{") and stat.S_IMODE(out.stat().st_mode) == 0o600
    with pytest.raises(Refused, match="exists already"):
        export_summary(fresh_clinic.context(), W43, "json", tmp_path / "s.json", deidentify=False, render=write)


def _mount_tmpfs(folder: Path, options: str) -> bool:
    folder.mkdir()
    return os.geteuid() == 0 and subprocess.run(
        ["mount", "-t", "tmpfs", "-o", options, "tmpfs", str(folder)], capture_output=True).returncode == 0


def _leaves_nothing(done, fresh_clinic, folder: Path, words: str) -> None:
    assert done.exit_code == 1, done.output
    assert done.output.startswith("caseload: ") and len(done.output.splitlines()) == 1, done.output
    assert words in done.output and "Traceback" not in done.output
    assert not fresh_clinic.store.audit.rows("summary.export")
    assert not [p for p in folder.iterdir() if p.name != "filler"]


def test_a_full_disk_is_one_line_and_leaves_nothing(run, fresh_clinic, tmp_path):
    small = tmp_path / "small"
    if not _mount_tmpfs(small, "size=32k"):
        pytest.skip("mounting a small tmpfs needs root")
    try:
        with open(small / "filler", "wb") as f:  # leave 4 KiB: less than any workbook
            f.write(b"\0" * (32 * 1024 - 4096))
        done = run("summary", "--week", W43, "--format", "xlsx", "--out", str(small / "s.xlsx"))
        _leaves_nothing(done, fresh_clinic, small, "the disk is full")
    finally:
        subprocess.run(["umount", str(small)], check=True)


def test_a_folder_that_cannot_be_written_is_one_line(run, fresh_clinic, tmp_path, monkeypatch):
    locked = tmp_path / "locked"
    if _mount_tmpfs(locked, "ro"):  # read-only even for root
        try:
            done = run("summary", "--week", W43, "--format", "json", "--out", str(locked / "s.json"))
            _leaves_nothing(done, fresh_clinic, locked, "no permission writing")
        finally:
            subprocess.run(["umount", str(locked)], check=True)
    else:
        locked.chmod(0o500)
        done = run("summary", "--week", W43, "--format", "json", "--out", str(locked / "s.json"))
        _leaves_nothing(done, fresh_clinic, locked, "no permission writing")


def test_a_read_only_store_is_one_line_and_leaves_no_file(fresh_clinic, tmp_path):
    # SQLite refuses every write on this connection as it does on a read-only file (SQLITE_READONLY).
    fresh_clinic.store.db.conn.execute("PRAGMA query_only = ON")
    with pytest.raises(StoreError, match="is read-only for this account: nothing was written$"):
        export_summary(fresh_clinic.context(), W43, "json", tmp_path / "s.json", deidentify=False, render=write)
    assert not (tmp_path / "s.json").exists()


def test_a_read_only_store_file_through_the_command_line(run, fresh_clinic, tmp_path):
    if os.geteuid() == 0:
        ro = tmp_path / "ro"
        if not _mount_tmpfs(ro, "size=4m"):
            pytest.skip("needs a mount")
        try:
            copy = ro / "clinic.db"
            fresh_clinic.store.backup(copy)
            subprocess.run(["mount", "-o", "remount,ro", str(ro)], check=True)
            out = tmp_path / "s.json"
            done = CliRunner().invoke(main, ["--db", str(copy), "--today", TODAY.isoformat(), "summary",
                                             "--week", W43, "--format", "json", "--out", str(out)], obj=TODAY)
            assert done.exit_code == 1
            assert done.output == (f"caseload: {copy} or its folder is read-only for this account: "
                                   "caseload needs to write there, ask an admin\n")
            assert not out.exists()
        finally:
            subprocess.run(["umount", str(ro)], check=True)
    else:
        pytest.skip("a read-only mount needs root")


# --- cells a spreadsheet or a page could misread


def _csv_cell(text: str) -> str:
    """The cell as a CSV reader gets it back from the file the exporter wrote."""
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "t.csv"
        _writer(["reason"], [[text]])(path)
        with open(path, newline="", encoding="utf-8") as f:
            return list(csv.reader(f))[1][0]


@given(st.text(max_size=40))
def test_no_csv_cell_starts_like_a_formula_and_no_control_survives(text):
    # OWASP, CSV Injection: cells starting with = + - @ tab or CR are prefixed so they read as text.
    cell = _csv_cell(text)
    assert not cell.lstrip(" ").startswith(tuple(FORMULA_SIGNS + "\t\r"))
    assert not any(ch in BIDI for ch in cell)
    assert not re.search(r"[\x00-\x1f\x7f-\x9f\u2028\u2029]", cell)
    shown = cell[1:] if cell.startswith("'") and printable(text).lstrip(" ")[:1] in FORMULA_SIGNS else cell
    assert shown == printable(text)  # nothing else changes


@pytest.mark.parametrize("text, shown", [
    ("=HYPERLINK(\"http://x\",\"click\")", "'=HYPERLINK(\"http://x\",\"click\")"),  # OWASP's example
    ("+44 7700 900123", "'+44 7700 900123"),
    ("-2 days late", "'-2 days late"),
    ("@SUM(A1:A2)", "'@SUM(A1:A2)"),
    ("\t=1+1", "\\t=1+1"),  # shown as an escape by the one display rule: text, not a formula
    ("\r=1+1", "\\r=1+1"),
    (" \t=1+1", " \\t=1+1"),
    ("typed 36.71 \u202eevil", "typed 36.71 \\u202eevil"),
    ("plain text", "plain text"),
])
def test_known_formula_cells(text, shown):
    assert spreadsheet_text(text) == shown


def test_a_formula_reason_reaches_every_format_as_text(fresh_clinic, tmp_path):
    c = fresh_clinic
    entry = c.log("2026-10-21 08:00", "phone1", "P1", "note", "called", "2026-10-21")
    c.void("2026-10-21 09:00", "nurse1", entry, "=1+2\u202e\u0007 wrong patient")
    paths = {fmt: export_summary(c.context(), W43, fmt, tmp_path / name, deidentify=False, render=write)
             for fmt, name in (("csv", "csv"), ("xlsx", "s.xlsx"), ("html", "s.html"))}
    with open(paths["csv"] / "quality-changes.csv", newline="", encoding="utf-8") as f:
        reasons = [row["reason"] for row in csv.DictReader(f)]
    shown = "=1+2\\u202e\\x07 wrong patient"  # controls as escapes, by the one display rule
    assert "'" + shown in reasons
    book = openpyxl.load_workbook(paths["xlsx"])  # openpyxl reads a formula cell as data_type "f"
    cells = [cell for row in book["Data quality"].iter_rows() for cell in row if cell.value == shown]
    assert cells and all(cell.data_type == "s" for cell in cells)
    page = paths["html"].read_text(encoding="utf-8")
    assert shown in page and "\u202e" not in page and "\u0007" not in page


# --- de-identified exports


@pytest.fixture(scope="module")
def pii_clinic(tmp_path_factory):
    clock = Clock()
    store = Store(tmp_path_factory.mktemp("pii") / "clinic.db", clock=clock)
    yield build(store, clock)
    store.close()


FIRST = st.sampled_from(["Lucia", "Lúcia", "Zoë", "Siobhán", "Nguyễn", "Anna", "Agnieszka", "Maëlle", "Inês"])
LAST = st.sampled_from(["Okafor", "Müller", "Ó Briain", "García-López", "Smith", "Kowalczyk"])
PHONE = st.from_regex(r"0[1-9][0-9]{3} [0-9]{6}|\+44 7[0-9]{3} [0-9]{6}|07[0-9]{9}", fullmatch=True)
STREET = st.sampled_from(["Acacia Ave", "Rue des Lilas", "Hauptstraße", "Calle Mayor", "Elm Road"])
PATIENT_ID = st.from_regex(r"[A-Z]{1,3}[0-9]{2,6}", fullmatch=True)


@st.composite
def identifying_text(draw):
    born = draw(st.dates(min_value=date(1960, 1, 1), max_value=date(2008, 12, 31)))
    born_text = draw(st.sampled_from(["%d/%m/%Y", "%-d/%-m/%Y", "%Y-%m-%d", "%d.%m.%Y", "%B %-d, %Y"]))
    parts = {
        "name": f"{draw(FIRST)} {draw(LAST)}",
        "born": born.strftime(born_text),
        "id": draw(PATIENT_ID),
        "phone": draw(PHONE),
        "address": f"{draw(st.integers(1, 999))} {draw(STREET)}",
    }
    return parts, f"{parts['name']} born {parts['born']}, id {parts['id']}, tel {parts['phone']}, {parts['address']}"


def _all_text(path: Path) -> str:
    """What a reader of the export sees: every file's text; for a workbook its cell values and its
    properties (its XML also holds cell references such as F14, which are no one's data)."""
    if path.is_dir():
        return "\n".join(_all_text(p) for p in sorted(path.iterdir()))
    if path.suffix == ".xlsx":
        book = openpyxl.load_workbook(path)
        with zipfile.ZipFile(path) as z:
            properties = [z.read(n).decode("utf-8") for n in z.namelist() if n.startswith("docProps/")]
        return "\n".join([*properties, *(str(v) for sheet in book for row in sheet.iter_rows(values_only=True)
                                          for v in row if v is not None)])
    return path.read_text(encoding="utf-8")


@settings(max_examples=12, deadline=None, phases=[Phase.explicit, Phase.generate],  # an example takes a second
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(identifying_text())
def test_de_identified_exports_carry_no_free_text_ids_or_dates(pii_clinic, tmp_path_factory, planted):
    parts, text = planted
    c = pii_clinic
    note = c.log("2026-10-22 10:00", "phone1", "P2", "note", text, "2026-10-22")
    symptom = c.log("2026-10-22 10:05", "phone1", "P3", "symptom", text, "2026-10-21")
    c.amend("2026-10-22 11:00", "nurse1", symptom, f"cramps ({text})", reason=text)
    c.void("2026-10-22 12:00", "nurse1", note, text)
    folder = tmp_path_factory.mktemp("deid")
    first = date(2026, 10, 19)
    # The week's own bounds (its start and end instants in UTC too), the day it was prepared, and
    # the workbook's creation time in its properties.
    allowed_dates = {first + timedelta(days=n) for n in (-1, 0, 6, 7)} | {TODAY, date.today()}
    for fmt, name in (("csv", "csv"), ("xlsx", "s.xlsx"), ("html", "s.html"), ("json", "s.json")):
        out = export_summary(c.context(), W43, fmt, folder / name, deidentify=True, render=write)
        shown = _all_text(out)
        for word in (*parts.values(), parts["name"].split()[0]):
            assert word not in shown, (fmt, word)
        for pid, (name, born, *_) in PATIENTS.items():
            assert name.split()[0] not in shown and born.isoformat() not in shown, (fmt, pid)
            assert not re.search(rf"(?<![\w-]){pid}(?![\w])", shown), (fmt, pid)
        iso_dates = {date.fromisoformat(d) for d in re.findall(r"\d{4}-\d{2}-\d{2}", shown)}
        assert iso_dates <= allowed_dates, (fmt, sorted(iso_dates - allowed_dates))


def test_de_identified_days_count_from_the_weeks_monday(fresh_clinic, tmp_path):
    import json

    doc = json.loads(export_summary(fresh_clinic.context(), W43, "json", tmp_path / "s.json", True, write).read_text())
    days = [row["day"] for row in doc["clinical"]["events"]["rows"]]
    # 2026-W43 runs from Monday 19 October (ISO 8601): Thursday 22 October is day 4.
    assert days and all(isinstance(d, int) for d in days)
    assert 4 in days
    assert "reason" not in doc["quality"]["changes"]["rows"][0] and "reasons" not in doc["quality"]
    assert "entry" not in doc["quality"]["changes"]["rows"][0]
