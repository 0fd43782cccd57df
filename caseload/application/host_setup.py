"""Setting up a shared host: the store belongs to a service account, staff reach it through sudo.

`set_up_host` (run as root) creates, or keeps when they exist: the clinic group, the service
account, the store's folder (0700, the service's), the store (0600, the service's; a new one with
its first admin mapped to that admin's own account), root's service file that tells caseload the
account is a service (see `identity`) and names the host's caseload admin accounts, a sudoers
drop-in letting the group run caseload, and only caseload, as the service account (checked with
`visudo -cf` before it is put in place), and a wrapper on PATH that runs it so. Each step says what
it did.

The program the rule names is run as the service account by anyone in the group, so it must be
root's alone: the file, every folder above it, and the interpreter its first line names (see
`_refuse_unsafe_program`).
"""

from __future__ import annotations

import grp
import os
import pwd
import re
import stat
import subprocess
import tempfile
from dataclasses import dataclass
from pathlib import Path

from caseload.application.errors import Refused
from caseload.application.identity import SERVICES_DIR, service, service_file
from caseload.application.staff import init_store
from caseload.core.parse import parse_id
from caseload.store import Store, creating
from caseload.store.db import store_files

SUDOERS_DIR = Path("/etc/sudoers.d")
WRAPPER_MARK = "# caseload wrapper: runs caseload as its service account"
SAFE_PATH = re.compile(r"/[\w./-]+")  # written into a sudo rule and a shell script as they are


@dataclass(frozen=True)
class HostPlan:
    service_account: str
    group: str
    store: Path
    program: Path  # the caseload executable the rule allows
    wrapper: Path
    admin_id: str | None = None  # the first admin of a new store
    admin_name: str | None = None
    admin_account: str | None = None


def _run(*command: str) -> None:
    done = subprocess.run(command, capture_output=True, text=True)
    if done.returncode != 0:
        reason = (done.stderr or done.stdout).strip().splitlines()
        raise Refused(f"'{' '.join(command)}' failed: {reason[-1] if reason else done.returncode}")


def _exists(lookup, name: str) -> bool:
    try:
        lookup(name)
        return True
    except KeyError:
        return False


def _group(name: str) -> str:
    if _exists(grp.getgrnam, name):
        return f"group {name} kept"
    _run("groupadd", name)
    return f"group {name} created"


def _account(plan: HostPlan) -> str:
    name = plan.service_account
    if _exists(pwd.getpwnam, name):
        if pwd.getpwnam(name).pw_uid == 0:
            raise Refused(f"{name} is root: the service account must be an account of its own")
        return f"service account {name} kept"
    _run("useradd", "--system", "--user-group", "--no-create-home", "--home-dir", str(plan.store.parent),
         "--shell", "/usr/sbin/nologin", "--comment", "caseload store", name)
    return f"service account {name} created"


def _folder(plan: HostPlan, uid: int, gid: int) -> str:
    folder = plan.store.parent
    if folder.exists() and folder.stat().st_uid != uid and any(folder.iterdir()):
        raise Refused(f"{folder} holds other files: give the store a folder of its own")
    folder.mkdir(parents=True, exist_ok=True)
    os.chown(folder, uid, gid)
    folder.chmod(0o700)
    return f"folder {folder} (0700, {plan.service_account})"


def _store(plan: HostPlan, uid: int, gid: int) -> str:
    new = not plan.store.exists()
    if new:
        if not (plan.admin_id and plan.admin_name and plan.admin_account):
            raise Refused("a new store needs its first admin: give --admin ID --name NAME --admin-account ACCOUNT")
        with creating(plan.store), Store(plan.store) as store:  # a failed set-up leaves no half-made store
            init_store(store, plan.admin_id, plan.admin_name, plan.admin_account)
    for path in store_files(plan.store):
        if path.exists():
            os.chown(path, uid, gid)
            path.chmod(0o600)
    what = f"store {plan.store} (0600, {plan.service_account})"
    return f"{what} created, admin {plan.admin_id} mapped to {plan.admin_account}" if new else f"{what} kept"


def _write_root_file(path: Path, text: str, mode: int) -> None:
    """Put a root-owned file in place whole: written aside, then renamed."""
    path.parent.mkdir(parents=True, exist_ok=True)
    with tempfile.NamedTemporaryFile("w", dir=path.parent, prefix=".caseload-", delete=False) as f:
        f.write(text)
    temp = Path(f.name)
    try:
        temp.chmod(mode)
        os.replace(temp, path)
    finally:
        temp.unlink(missing_ok=True)


def _toml_text(value: str) -> str:
    return '"' + value.replace("\\", "\\\\").replace('"', '\\"') + '"'


def _service_file(plan: HostPlan) -> str:
    """Root's word that the account is a service, with the host's caseload admin accounts: those named
    before (a setup run again keeps them) and `--admin-account`. They may restore the store when it is
    too damaged to say who its own admins are (`store_care.restore_damaged`)."""
    path = service_file(plan.service_account)
    earlier = service(plan.service_account)
    admins = [*(earlier.admins if earlier else ()), *([plan.admin_account] if plan.admin_account else [])]
    listed = ", ".join(_toml_text(a) for a in dict.fromkeys(admins))
    _write_root_file(path, f"# Written by caseload host setup: {plan.service_account} runs this caseload store.\n"
                           f"store = {_toml_text(str(plan.store))}\ngroup = {_toml_text(plan.group)}\n"
                           f"admins = [{listed}]\n", 0o644)
    SERVICES_DIR.chmod(0o755)
    return f"service file {path}"


def sudoers_rule(plan: HostPlan) -> str:
    # No argument list after the program: sudo then allows any arguments to it, and nothing else.
    return (f"# caseload: members of {plan.group} run caseload, and only caseload, as {plan.service_account}\n"
            f"%{plan.group} ALL=({plan.service_account}) NOPASSWD: {plan.program}\n")


def _sudoers(plan: HostPlan) -> str:
    path = SUDOERS_DIR / f"caseload-{plan.service_account.replace('.', '_')}"  # sudo skips names with a dot
    with tempfile.NamedTemporaryFile("w", prefix="caseload-sudoers-", delete=False) as f:
        f.write(sudoers_rule(plan))
    try:
        _run("visudo", "-cf", f.name)
    finally:
        os.unlink(f.name)
    _write_root_file(path, sudoers_rule(plan), 0o440)
    return f"sudo rule {path} (checked with visudo)"


def wrapper_script(plan: HostPlan) -> str:
    return (
        "#!/bin/sh\n"
        f"{WRAPPER_MARK}\n"
        f"if ! id -nG | tr ' ' '\\n' | grep -qx '{plan.group}'; then\n"
        f"    echo \"caseload: your account $(id -un) is not in the group {plan.group} that uses this caseload: "
        "ask an admin\" >&2\n"
        "    exit 1\n"
        "fi\n"
        f"exec sudo -n -u {plan.service_account} -- {plan.program} \"$@\"\n"
    )


def _wrapper(plan: HostPlan) -> str:
    if plan.wrapper.resolve() == plan.program.resolve():
        raise Refused(f"--wrapper {plan.wrapper} is caseload itself: choose another path for the wrapper")
    if plan.wrapper.exists() and WRAPPER_MARK not in plan.wrapper.read_text(errors="replace"):
        raise Refused(f"{plan.wrapper} exists and is not a caseload wrapper: choose another path")
    _write_root_file(plan.wrapper, wrapper_script(plan), 0o755)
    return f"wrapper {plan.wrapper}"


def _refuse_unsafe_program(program: Path) -> None:
    """Refuse a program anyone but root could change. The sudo rule lets every member of the group run
    whatever is at that path as the service account: whoever can write the file, or any folder above
    it (to put another file there), or the interpreter its first line names, could run anything as
    the service and read or rewrite the store. Checked along the path as given (a symbolic link is
    judged by the folder holding it) and along the real path it leads to."""
    what, path, seen = f"--program {program}", program, set()
    while path.resolve() not in seen:  # an interpreter may itself be a script: each is checked once
        seen.add(path.resolve())
        _refuse_writable_by_others(path, what)
        with open(path, "rb") as f:
            first = f.readline(4096)
        if not first.startswith(b"#!"):
            return  # a compiled program: its own file is all the kernel runs
        line = os.fsdecode(first[2:]).strip()
        interpreter = Path(line.split()[0]) if line else None
        if interpreter is None or not interpreter.is_absolute() or interpreter.name == "env":
            raise Refused(f"{what} is not safe for a sudo rule: its first line ('#!{line}') leaves the "
                          "interpreter to a search of PATH; give a program that names it by its full path")
        if not interpreter.is_file():
            raise Refused(f"{what} names the interpreter {interpreter}, which is not a file: give the caseload "
                          "program installed on this host")
        what, path = f"{interpreter}, the interpreter of {program},", interpreter


def _refuse_writable_by_others(program: Path, what: str) -> None:
    real = program.resolve()
    for path in dict.fromkeys([program, *program.parents, real, *real.parents]):
        info = path.lstat()
        if info.st_uid != 0:
            raise Refused(f"{what} is not safe for a sudo rule: {path} belongs to {_owner(info.st_uid)}, not "
                          "root; install caseload where only root can change it")
        if not stat.S_ISLNK(info.st_mode) and info.st_mode & (stat.S_IWGRP | stat.S_IWOTH):
            who = "others" if info.st_mode & stat.S_IWOTH else "its group"
            raise Refused(f"{what} is not safe for a sudo rule: {path} may be written by {who}; install "
                          "caseload where only root can change it")


def _owner(uid: int) -> str:
    try:
        return pwd.getpwuid(uid).pw_name
    except KeyError:
        return f"uid {uid}"


def set_up_host(plan: HostPlan) -> list[str]:
    """Create what is missing for a shared store; returns one line per step."""
    if os.geteuid() != 0:
        raise Refused("host setup creates an account, a sudo rule and a wrapper: run it as root")
    parse_id(plan.service_account, "service account")
    parse_id(plan.group, "group")
    if not SAFE_PATH.fullmatch(str(plan.program)) or not SAFE_PATH.fullmatch(str(plan.wrapper)):
        raise Refused("the program and wrapper paths may hold only letters, digits, '.', '_', '-' and '/'")
    if not plan.program.is_file() or not os.access(plan.program, os.X_OK):
        raise Refused(f"{plan.program} is not an executable file: give the caseload program with --program")
    _refuse_unsafe_program(plan.program)
    if plan.admin_account and not _exists(pwd.getpwnam, plan.admin_account):
        raise Refused(f"no OS account '{plan.admin_account}' on this host: create it first")
    done = [_group(plan.group), _account(plan)]
    entry = pwd.getpwnam(plan.service_account)
    done += [_folder(plan, entry.pw_uid, entry.pw_gid), _store(plan, entry.pw_uid, entry.pw_gid),
             _service_file(plan), _sudoers(plan), _wrapper(plan)]
    return done
