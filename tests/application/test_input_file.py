"""Files named on the command line, read through `input_file` on real files under tmp_path: regular
files only, never more than the limit, and for a sudo caller only what her own uid and groups could
read. The suite runs as root, which may read everything itself, so every refusal of a caller below is
this module's check and not the kernel's; the files are given to uids and gids that need not exist."""

from __future__ import annotations

import os

import pytest

from caseload.application.identity import Caller
from caseload.application.input_file import may, read_file_as
from caseload.core.parse import InputError

pytestmark = pytest.mark.skipif(os.geteuid() != 0, reason="giving files to other uids needs root (CI runs as root)")

CALLER = Caller("clerk54321", 54321, frozenset({54321, 54322}))
SOMEONE_ELSE = 54400
WHAT = "a UTF-8 CSV file"
TEXT = "patient,day,kind,value\n"


@pytest.fixture
def here(tmp_path, monkeypatch):
    """tmp_path, searchable by all, as the working folder. The folders pytest makes above it are
    root's alone, so the caller's paths are relative to it: a relative lookup starts at the working
    folder and needs no permission on those above it (the kernel's rule too)."""
    tmp_path.chmod(0o755)
    monkeypatch.chdir(tmp_path)
    return tmp_path


def made(path, mode: int, uid: int = 0, gid: int = 0, text: str = TEXT):
    if not path.exists():
        path.write_text(text)
    os.chown(path, uid, gid)
    path.chmod(mode)
    return path


def folder(path, mode: int, uid: int = 0, gid: int = 0):
    path.mkdir()
    os.chown(path, uid, gid)
    path.chmod(mode)
    return path


def refused(path: str, caller: Caller | None = CALLER) -> str:
    with pytest.raises(InputError) as err:
        read_file_as(caller, path, 1024, WHAT)
    return str(err.value)


def not_readable(path: str) -> str:
    return f"{path} is not readable by clerk54321: give a UTF-8 CSV file your account can read"


@pytest.mark.parametrize("uid, gid, mode, readable", [
    (54321, 0, 0o400, True),  # her own file
    (54321, 54322, 0o044, False),  # her own file without the owner's bit: the group's and others' do not apply
    (SOMEONE_ELSE, 54322, 0o040, True),  # a group she is in
    (SOMEONE_ELSE, 54322, 0o404, False),  # a group she is in, without its bit: the others' does not apply
    (SOMEONE_ELSE, 0, 0o004, True),  # anyone's
    (SOMEONE_ELSE, 0, 0o660, False),  # neither hers nor her group's, closed to others
])
def test_the_mode_bits_are_read_as_the_kernel_reads_them(tmp_path, uid, gid, mode, readable):
    info = made(tmp_path / "f.csv", mode, uid, gid).stat()
    assert may(info, CALLER, os.R_OK) is readable
    assert may(info, Caller("root", 0, frozenset({0})), os.R_OK)  # root reads whatever the bits say


def test_her_own_her_groups_and_anyones_files_are_read(here):
    made(here / "own.csv", 0o600, 54321, 0)
    made(here / "group.csv", 0o640, SOMEONE_ELSE, 54322)
    made(here / "anyone.csv", 0o644)
    for name in ("own.csv", "group.csv", "anyone.csv", "./anyone.csv"):
        assert read_file_as(CALLER, name, 1024, WHAT) == TEXT.encode()


def test_a_file_only_the_service_may_read_is_refused_in_one_line(here):
    made(here / "workload-staff.csv", 0o600, SOMEONE_ELSE, SOMEONE_ELSE, text="secret-header\n")
    assert refused("workload-staff.csv") == not_readable("workload-staff.csv")
    assert read_file_as(None, "workload-staff.csv", 1024, WHAT) == b"secret-header\n"  # root reading for itself


def test_a_folder_she_cannot_search_hides_every_name_in_it(here):
    service = folder(here / "service", 0o700, SOMEONE_ELSE, SOMEONE_ELSE)
    made(service / "open.csv", 0o644)
    # A readable file and a missing one get the same line: nothing tells her what the folder holds.
    for path in ("service/open.csv", "service/missing.csv", "service/../service/open.csv"):
        assert refused(path) == not_readable(path)
    passable = folder(here / "passable", 0o711)  # search without listing is enough to reach a file
    made(passable / "open.csv", 0o644)
    assert read_file_as(CALLER, "passable/open.csv", 1024, WHAT) == TEXT.encode()
    assert refused("passable/missing.csv") == "passable/missing.csv: no such file: give a UTF-8 CSV file"
    inner = folder(service / "inner", 0o755)  # open below a closed folder is still behind it
    made(inner / "open.csv", 0o644)
    assert refused("service/inner/open.csv") == not_readable("service/inner/open.csv")


def test_links_are_followed_from_where_they_lie_with_her_permissions(here):
    service = folder(here / "service", 0o700, SOMEONE_ELSE, SOMEONE_ELSE)
    made(service / "staff.csv", 0o644)
    passable = folder(here / "passable", 0o711)
    made(passable / "open.csv", 0o644)
    (here / "to-service.csv").symlink_to("service/staff.csv")
    (here / "to-open.csv").symlink_to("passable/../passable/open.csv")
    (service / "back.csv").symlink_to("../passable/open.csv")  # leads out, but lies where she cannot look
    (here / "loop.csv").symlink_to("loop.csv")
    assert refused("to-service.csv") == not_readable("to-service.csv")
    assert read_file_as(CALLER, "to-open.csv", 1024, WHAT) == TEXT.encode()
    assert refused("service/back.csv") == not_readable("service/back.csv")
    assert refused("loop.csv") == "loop.csv: cannot be read (Too many levels of symbolic links): give a UTF-8 CSV file"


@pytest.mark.parametrize("caller", [None, CALLER], ids=["own account", "sudo caller"])
def test_only_a_regular_file_is_opened(here, caller):
    os.mkfifo(here / "pipe")  # opening a pipe to read would wait for a writer: it is never opened
    (here / "to-pipe").symlink_to("pipe")
    folder(here / "dir", 0o755)
    for name in ("pipe", "to-pipe"):
        assert refused(name, caller) == f"{name}: not a regular file (a pipe, device or socket): give a UTF-8 CSV file"
    assert refused("dir", caller) == "dir: is a folder: give a UTF-8 CSV file"
    assert refused("missing.csv", caller) == "missing.csv: no such file: give a UTF-8 CSV file"


def bytes_read() -> int:
    """What this process has read through read calls so far (Linux's count)."""
    with open("/proc/self/io") as io:
        return next(int(line.split()[1]) for line in io if line.startswith("rchar:"))


@pytest.mark.parametrize("caller", [None, CALLER], ids=["own account", "sudo caller"])
def test_at_most_the_limit_is_read(here, caller):
    made(here / "full.csv", 0o644, text="x" * 1024)
    made(here / "over.csv", 0o644)
    os.truncate(here / "over.csv", 256 << 20)  # sparse: 256 MB of size without the disk
    assert read_file_as(caller, "full.csv", 1024, WHAT) == b"x" * 1024
    before = bytes_read()
    assert refused("over.csv", caller) == "over.csv: larger than 1 KB: give a UTF-8 CSV file of at most 1 KB"
    assert bytes_read() - before < 64 * 1024  # the limit and a byte, in one buffer: not the file
