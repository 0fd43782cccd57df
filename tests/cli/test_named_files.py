"""Files named to `import` and `protocol check`, on real files: a pipe, a device or a folder is refused
in one line without being opened, a file past the limit without being read whole, and a first line
that is not the header is not echoed (the file may be anything the account running caseload can read)."""

from __future__ import annotations

import os
import resource
import subprocess
import sys

from caseload.application import csv_import, protocol
from tests.cli.test_cli import counts


def _small_memory() -> None:
    resource.setrlimit(resource.RLIMIT_AS, (1 << 30, 1 << 30))


def caseload(*args: str) -> subprocess.CompletedProcess:
    """The program in a process of its own, so that should a change bring the old reads back, reading a
    pipe fails by the timeout rather than hang the suite, and reading /dev/zero with a MemoryError at
    1 GB rather than take the machine's memory."""
    return subprocess.run([sys.executable, "-m", "caseload", *args], capture_output=True, text=True, timeout=60,
                          stdin=subprocess.DEVNULL, preexec_fn=_small_memory)


def test_a_device_a_pipe_or_a_folder_is_refused_by_import_in_one_line(clinic, tmp_path):
    os.mkfifo(tmp_path / "pipe.csv")
    before = counts(clinic.db)
    for path in ("/dev/zero", str(tmp_path / "pipe.csv")):
        done = caseload("--db", clinic.db, "import", path)
        assert (done.returncode, done.stderr) == (1, f"caseload: {path}: not a regular file (a pipe, device or "
                                                     "socket): give a UTF-8 CSV file\n")
    folder = clinic("import", str(tmp_path))
    assert (folder.exit_code, folder.stderr) == (1, f"caseload: {tmp_path}: is a folder: give a UTF-8 CSV file\n")
    assert counts(clinic.db) == before


def test_protocol_check_of_a_device_or_a_pipe_is_one_line(tmp_path):
    os.mkfifo(tmp_path / "pipe.toml")
    for path in ("/dev/zero", str(tmp_path / "pipe.toml")):
        done = caseload("protocol", "check", path)
        assert (done.returncode, done.stdout) == (1, "")
        assert done.stderr == (f"caseload: {path}: not a regular file (a pipe, device or socket): "
                               "give the clinic's protocol TOML file\n")


def test_a_file_past_the_limit_is_refused_naming_the_limit(clinic, tmp_path):
    history, settings = tmp_path / "history.csv", tmp_path / "protocol.toml"
    history.write_text("patient,day,kind,value\n")
    os.truncate(history, csv_import.MAX_BYTES + 1)  # sparse: the size without the disk
    settings.write_text("# " + "x" * protocol.MAX_BYTES)
    before = counts(clinic.db)
    done = clinic("import", str(history))
    assert (done.exit_code, done.stderr) == (1, f"caseload: {history}: larger than 20 MB: give a UTF-8 CSV file "
                                                "of at most 20 MB\n")
    assert counts(clinic.db) == before
    checked = clinic("protocol", "check", str(settings))
    assert (checked.exit_code, checked.stderr) == (1, f"caseload: {settings}: larger than 256 KB: give the clinic's "
                                                      "protocol TOML file of at most 256 KB\n")


def test_a_first_line_that_is_not_the_header_is_named_but_not_shown(clinic, tmp_path):
    other = tmp_path / "workload-staff.csv"
    other.write_text("staff,shift,hours\nphil,early,7.5\n")
    done = clinic("import", str(other))
    assert done.exit_code == 1
    assert done.stderr == ("caseload: line 1: the file's first line is not a header this import accepts: it names "
                           "the columns patient,day,kind,value and optionally time,flags,note,correction, each once\n")
    assert "staff" not in done.stderr and "shift" not in done.stderr
