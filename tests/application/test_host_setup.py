"""`host setup` names a program in a sudo rule that every member of the clinic group may run as the
service account: it is refused unless root alone can change the program, every folder above it and
the interpreter its first line names. Real files and folders, owned and moded with chown and chmod
(root only: CI runs as root)."""

from __future__ import annotations

import os
import pwd
import shutil
import stat
import sys
import tempfile
from collections.abc import Iterator
from pathlib import Path

import pytest

from caseload.application.errors import Refused
from caseload.application.host_setup import HostPlan, set_up_host

pytestmark = pytest.mark.skipif(os.geteuid() != 0, reason="host setup, chown and root-owned folders need root")

# Where a folder that root alone can change may be made: not under /tmp, which anyone may write.
ROOT_ONLY_PARENTS = ("/usr/local/lib", "/opt", "/var/lib")


def root_only(path: Path) -> bool:
    """Whether root alone can change `path` and every folder above it, where it is and where it leads."""
    real = path.resolve()
    return real.exists() and all(
        p.stat().st_uid == 0 and not p.stat().st_mode & (stat.S_IWGRP | stat.S_IWOTH)
        for p in [path.parent, *path.parent.parents, real, *real.parents]
    )


def root_only_folder(prefix: str) -> Path | None:
    """A new folder (0755, root's) with no folder above it that anyone but root may change; None
    when this host has no such place. The caller removes it."""
    for parent in map(Path, ROOT_ONLY_PARENTS):
        if root_only(parent):
            folder = Path(tempfile.mkdtemp(prefix=prefix, dir=parent))
            folder.chmod(0o755)
            return folder
    return None


@pytest.fixture
def safe() -> Iterator[Path]:
    folder = root_only_folder("caseload-test-program-")
    if folder is None:
        pytest.skip("no folder here that root alone can change")
    try:
        yield folder
    finally:
        shutil.rmtree(folder, ignore_errors=True)


@pytest.fixture
def python() -> Path:
    """A Python root alone can change, for a program's first line: the suite's own may sit in a
    virtual environment under /tmp, which host setup rightly refuses."""
    for candidate in (Path(sys.executable), Path(f"/usr/bin/python3.{sys.version_info.minor}"), Path("/usr/bin/python3")):
        if candidate.exists() and root_only(candidate):
            return candidate
    pytest.skip("no Python here that root alone can change")


def script(path: Path, first_line: str) -> Path:
    path.write_text(f"{first_line}\nprint('caseload')\n")
    path.chmod(0o755)
    return path


def setup_with(program: Path) -> str:
    """The refusal of a host setup naming `program`; the plan's accounts are never reached."""
    plan = HostPlan("clsvc-never", "clgrp-never", Path("/nonexistent/store.db"), program, Path("/nonexistent/w"))
    with pytest.raises(Refused) as refused:
        set_up_host(plan)
    return str(refused.value)


def test_a_program_root_alone_can_change_passes_the_check(safe, python):
    """The refusal that follows is the service account's, after the program's check: nothing is made
    (the group root exists, and root cannot be the service account)."""
    program = script(safe / "caseload", f"#!{python}")
    plan = HostPlan("root", "root", Path("/nonexistent/store.db"), program, Path("/nonexistent/w"))
    with pytest.raises(Refused) as refused:
        set_up_host(plan)
    assert str(refused.value) == "root is root: the service account must be an account of its own"


def test_a_program_another_account_owns_is_refused(safe, python):
    program = script(safe / "caseload", f"#!{python}")
    os.chown(program, pwd.getpwnam("nobody").pw_uid, -1)
    assert setup_with(program) == (f"--program {program} is not safe for a sudo rule: {program} belongs to nobody, "
                                   "not root; install caseload where only root can change it")


@pytest.mark.parametrize("mode, who", [(0o775, "its group"), (0o757, "others")])
def test_a_program_its_group_or_others_may_write_is_refused(safe, python, mode, who):
    program = script(safe / "caseload", f"#!{python}")
    program.chmod(mode)
    assert setup_with(program) == (f"--program {program} is not safe for a sudo rule: {program} may be written by "
                                   f"{who}; install caseload where only root can change it")


def test_a_folder_above_it_that_others_may_write_is_refused(safe, python):
    """Whoever can write the folder can put another file at the program's name."""
    (safe / "bin").mkdir()
    program = script(safe / "bin" / "caseload", f"#!{python}")
    (safe / "bin").chmod(0o1777)  # sticky or not: the rule outlives the file, and anyone may then make it
    assert f"{safe / 'bin'} may be written by others" in setup_with(program)


def test_a_link_to_a_program_others_may_change_is_refused(safe, python):
    """Judged along the real path too: the link is safe where it sits, its target is not."""
    (safe / "open").mkdir()
    target = script(safe / "open" / "caseload", f"#!{python}")
    (safe / "open").chmod(0o777)
    (safe / "caseload").symlink_to(target)
    assert setup_with(safe / "caseload") == (
        f"--program {safe / 'caseload'} is not safe for a sudo rule: {safe / 'open'} may be written by others; "
        "install caseload where only root can change it")


def test_an_interpreter_another_account_owns_is_refused(safe):
    interpreter = safe / "python"
    interpreter.write_bytes(b"\x7fELF")  # judged by who may change it, before anything is read from it
    interpreter.chmod(0o755)
    os.chown(interpreter, pwd.getpwnam("nobody").pw_uid, -1)
    program = script(safe / "caseload", f"#!{interpreter} -I")
    assert setup_with(program) == (f"{interpreter}, the interpreter of {program}, is not safe for a sudo rule: "
                                   f"{interpreter} belongs to nobody, not root; install caseload where only root "
                                   "can change it")


def test_an_interpreter_found_on_path_is_refused(safe):
    program = script(safe / "caseload", "#!/usr/bin/env python3")
    assert setup_with(program) == (f"--program {program} is not safe for a sudo rule: its first line "
                                   "('#!/usr/bin/env python3') leaves the interpreter to a search of PATH; give a "
                                   "program that names it by its full path")
