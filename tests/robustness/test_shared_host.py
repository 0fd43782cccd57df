"""A shared host with real Linux accounts: the store belongs to a service account and staff reach
it only through the sudo rule that `caseload host setup` writes.

Needs root (to create accounts) and sudo; each run creates its own service account, group, admin,
clerk, nurse and outsider with unique names, and removes them afterwards.
"""

from __future__ import annotations

import os
import pwd
import secrets
import shutil
import sqlite3
import stat
import subprocess
import sys
import sysconfig
import tempfile
from dataclasses import dataclass
from pathlib import Path

import pytest

from caseload.application.identity import service_file
from tests.application.test_host_setup import root_only, root_only_folder

pytestmark = [
    pytest.mark.skipif(os.geteuid() != 0, reason="creating Linux accounts and a sudo rule needs root"),
    pytest.mark.skipif(not (shutil.which("sudo") and shutil.which("visudo") and shutil.which("useradd")),
                       reason="needs sudo, visudo and useradd (.ci/run installs sudo)"),
]


def _open_to_all(path: Path) -> bool:
    """Whether every account can reach and run this file (each folder above it searchable)."""
    return all(p.stat().st_mode & stat.S_IXOTH for p in [path, *path.parents])


def _interpreter() -> Path | None:
    """A Python of this minor version that every account may run (the suite's own may sit under /root)
    and root alone can change (host setup refuses a program whose interpreter others could change)."""
    for candidate in (Path(sys.executable), Path(f"/usr/bin/python3.{sys.version_info.minor}")):
        if candidate.exists() and _open_to_all(candidate.resolve()) and root_only(candidate):
            return candidate
    return None


@dataclass
class Host:
    base: Path
    store: Path
    program: Path
    wrapper: Path
    service: str
    group: str
    admin: str
    clerk: str
    nurse: str
    outsider: str
    setup_output: str = ""

    def as_user(self, account: str, *command: str, env: dict | None = None) -> subprocess.CompletedProcess:
        # runuser starts a fresh environment for the account, as a login would.
        return subprocess.run(["runuser", "-u", account, "--", "env", "-i", "PATH=/usr/bin:/bin", "LANG=C.UTF-8",
                               *(f"{k}={v}" for k, v in (env or {}).items()), *command],
                              capture_output=True, text=True, timeout=60)

    def caseload(self, account: str, *args: str, env: dict | None = None) -> subprocess.CompletedProcess:
        """`caseload ARGS` typed by `account`: the wrapper on PATH, which goes through sudo."""
        return self.as_user(account, str(self.wrapper), *args, env=env)


def _run(*command: str) -> None:
    subprocess.run(command, check=True, capture_output=True)


@pytest.fixture(scope="module")
def host():
    interpreter = _interpreter()
    if interpreter is None:
        pytest.skip("no Python of this version that other accounts may run")
    tag = secrets.token_hex(3)
    names = {role: f"cl{role[0]}{tag}" for role in ("service", "group", "admin", "clerk", "nurse", "outsider")}
    installed = root_only_folder("caseload-host-")  # the rule's program: root's alone, as host setup demands
    if installed is None:
        pytest.skip("no folder here that root alone can change, for the program the sudo rule names")
    base = Path(tempfile.mkdtemp(prefix="caseload-host-", dir="/tmp"))
    base.chmod(0o755)
    program = installed / "caseload"
    # The suite's caseload, started by an interpreter every account may run.
    program.write_text(f"#!{interpreter}\nimport site\nsite.addsitedir({sysconfig.get_paths()['purelib']!r})\n"
                       "from caseload.cli import run\nrun()\n")
    program.chmod(0o755)
    made: list[str] = []
    try:
        _run("groupadd", names["group"])
        for role in ("admin", "clerk", "nurse", "outsider"):
            groups = [] if role == "outsider" else ["-G", names["group"]]
            _run("useradd", "--no-create-home", "--shell", "/bin/sh", *groups, names[role])
            made.append(names[role])
        h = Host(base, base / "store" / "caseload.db", program, base / "bin" / "caseload-clinic", names["service"],
                 names["group"], names["admin"], names["clerk"], names["nurse"], names["outsider"])
        setup = subprocess.run(
            [sys.executable, "-m", "caseload", "host", "setup", "--service-account", h.service, "--group", h.group,
             "--store", str(h.store), "--admin", "ada", "--name", "Ada Admin", "--admin-account", h.admin,
             "--program", str(program), "--wrapper", str(h.wrapper)], capture_output=True, text=True, timeout=120)
        made.append(h.service)
        assert setup.returncode == 0, setup.stderr
        h.setup_output = setup.stdout
        for args in (("staff", "add", "phil", "--name", "Phil Phone", "--role", "phone", "--os-account", h.clerk),
                     ("staff", "add", "nell", "--name", "Nell Nurse", "--role", "nurse", "--os-account", h.nurse),
                     ("patient", "add", "P1", "--name", "Pia Test", "--born", "1991-04-02", "--nurse", "nell")):
            done = h.caseload(h.admin, *args)
            assert done.returncode == 0, done.stderr
        yield h
    finally:
        for account in made:
            subprocess.run(["userdel", account], capture_output=True)
        subprocess.run(["groupdel", names["group"]], capture_output=True)
        subprocess.run(["groupdel", names["service"]], capture_output=True)
        service_file(names["service"]).unlink(missing_ok=True)
        Path(f"/etc/sudoers.d/caseload-{names['service']}").unlink(missing_ok=True)
        shutil.rmtree(base, ignore_errors=True)
        shutil.rmtree(installed, ignore_errors=True)


def _rows(h: Host, sql: str) -> list[tuple]:
    conn = sqlite3.connect(h.store)  # as root, to look
    try:
        return conn.execute(sql).fetchall()
    finally:
        conn.close()


def test_setup_makes_the_store_the_services_alone(host):
    h = host
    service = pwd.getpwnam(h.service)
    folder, store = h.store.parent.stat(), h.store.stat()
    assert (folder.st_uid, stat.S_IMODE(folder.st_mode)) == (service.pw_uid, 0o700)
    assert (store.st_uid, stat.S_IMODE(store.st_mode)) == (service.pw_uid, 0o600)
    rule = Path(f"/etc/sudoers.d/caseload-{h.service}")
    assert stat.S_IMODE(rule.stat().st_mode) == 0o440
    assert f"%{h.group} ALL=({h.service}) NOPASSWD: {h.program}\n" in rule.read_text()
    assert subprocess.run(["visudo", "-cf", str(rule)], capture_output=True).returncode == 0
    assert "created, admin ada mapped to" in h.setup_output
    assert _rows(h, "SELECT id, role, os_account FROM staff ORDER BY id") == [
        ("ada", "admin", h.admin), ("nell", "nurse", h.nurse), ("phil", "phone", h.clerk)]


def test_the_clerk_logs_through_the_rule_and_the_audit_names_her_account(host):
    h = host
    done = h.caseload(h.clerk, "log", "P1", "lh", "positive")
    assert done.returncode == 0, done.stderr
    # sudo sets SUDO_USER to the invoking account; the audit row records it, not the service account.
    (row,) = _rows(h, "SELECT by_staff, os_account FROM audit WHERE action = 'entry.log' ORDER BY id DESC LIMIT 1")
    assert row == ("phil", h.clerk)


def test_a_forged_sudo_user_changes_nothing(host):
    h = host
    admin_uid = str(pwd.getpwnam(h.admin).pw_uid)
    forged = {"SUDO_USER": h.admin, "SUDO_UID": admin_uid}
    done = h.caseload(h.clerk, "staff", "add", "eve", "--name", "Eve Extra", "--role", "admin", env=forged)
    assert done.returncode == 1
    assert done.stderr.strip().startswith("caseload: phone staff may not")
    # Without the rule, the variables are the clerk's own: her process cannot open the store at all.
    direct = h.as_user(h.clerk, str(h.program), "--db", str(h.store), "list", env=forged)
    assert direct.returncode == 1 and len(direct.stderr.splitlines()) == 1, direct.stderr
    assert "no permission" in direct.stderr and "Traceback" not in direct.stderr


def test_the_clerk_cannot_change_a_role_or_act_as_the_admin(host):
    h = host
    before = _rows(h, "SELECT id, role, os_account FROM staff ORDER BY id")
    for args in (("staff", "add", "eve", "--name", "Eve Extra", "--role", "admin", "--os-account", h.clerk),
                 ("staff", "map", "ada", h.clerk),
                 ("--as", "ada", "staff", "map", "ada", h.clerk)):
        done = h.caseload(h.clerk, *args)
        assert done.returncode == 1 and len(done.stderr.splitlines()) == 1, (args, done.stderr)
    assert _rows(h, "SELECT id, role, os_account FROM staff ORDER BY id") == before


def test_the_clerk_cannot_read_the_file_or_run_sql_on_it(host):
    h = host
    probe = (
        "import sqlite3, sys\n"
        "try:\n    open(sys.argv[1], 'rb').read(16)\nexcept OSError as e:\n    print('open', type(e).__name__)\n"
        "try:\n    sqlite3.connect(sys.argv[1]).execute('UPDATE staff SET role = \"admin\"')\n"
        "except sqlite3.Error as e:\n    print('sqlite', e)\n"
    )
    done = h.as_user(h.clerk, str(_interpreter()), "-c", probe, str(h.store))
    assert done.stdout.splitlines() == ["open PermissionError", "sqlite unable to open database file"], done
    assert _rows(h, "SELECT role FROM staff WHERE id = 'phil'") == [("phone",)]


def test_the_rule_opens_no_other_file(host):
    h = host
    done = h.caseload(h.nurse, "--db", str(h.base / "mine.db"), "init", "--admin", "nell2", "--name", "Nell Two")
    assert done.returncode == 1
    assert done.stderr == "caseload: this host's caseload uses its one store: run it without --db or CASELOAD_DB\n"
    assert not (h.base / "mine.db").exists()
    before = h.store.read_bytes()
    for args in (("demo", "--no-ui"), ("--db", str(h.store), "demo", "--no-ui")):  # the demo rebuilds its file
        done = h.caseload(h.nurse, *args)
        assert done.returncode == 1 and len(done.stderr.splitlines()) == 1, done.stderr
    assert h.store.read_bytes() == before


def test_the_nurse_works_as_herself(host):
    h = host
    done = h.caseload(h.nurse, "entries", "P1", "--json")
    assert done.returncode == 0, done.stderr
    assert '"lh"' in done.stdout


def test_an_account_outside_the_group_gets_one_line(host):
    h = host
    done = h.caseload(h.outsider, "list")
    assert done.returncode == 1
    assert done.stderr == (f"caseload: your account {h.outsider} is not in the group {h.group} that uses this "
                           "caseload: ask an admin\n")
    direct = h.as_user(h.outsider, str(h.program), "--db", str(h.store), "list")
    assert direct.returncode == 1 and len(direct.stderr.splitlines()) == 1 and "Traceback" not in direct.stderr
    # sudo itself refuses her: the rule names the group only.
    refused = h.as_user(h.outsider, "sudo", "-n", "-u", h.service, str(h.program), "list")
    assert refused.returncode != 0 and not refused.stdout


def test_setup_again_keeps_what_exists_and_ordinary_accounts_are_refused(host):
    h = host
    again = subprocess.run(
        [sys.executable, "-m", "caseload", "host", "setup", "--service-account", h.service, "--group", h.group,
         "--store", str(h.store), "--program", str(h.program), "--wrapper", str(h.wrapper)],
        capture_output=True, text=True, timeout=120)
    assert again.returncode == 0, again.stderr
    assert f"store {h.store} (0600, {h.service}) kept" in again.stdout
    assert _rows(h, "SELECT count(*) FROM staff") == [(3,)]
    # The host's caseload admin named at first setup is kept when setup runs again without one.
    assert f'admins = ["{h.admin}"]\n' in service_file(h.service).read_text()
    as_clerk = h.as_user(h.clerk, str(h.program), "host", "setup", "--service-account", "x", "--group", "y",
                         "--store", str(h.base / "other" / "x.db"))
    assert as_clerk.returncode == 1
    assert as_clerk.stderr == ("caseload: host setup creates an account, a sudo rule and a wrapper: run it as root\n")


def test_a_file_named_through_the_rule_is_read_only_when_the_caller_could_read_it(host):
    h = host
    service = pwd.getpwnam(h.service)
    # A valid import, in the service's own folder: the rule must not read it for a nurse.
    private = h.store.parent / "workload-staff.csv"
    private.write_text("patient,day,kind,value\nP1,yesterday,bleed,heavy\n")
    os.chown(private, service.pw_uid, service.pw_gid)
    private.chmod(0o644)  # readable by all, but behind the service's owner-only folder
    hers = h.base / f"{h.nurse}.csv"
    hers.write_text("patient,day,kind,value\nP1,yesterday,bleed,heavy\n")
    shut = h.base / "shut.csv"  # where she can look, but the service's alone to read
    shutil.copy(hers, shut)
    os.chown(shut, service.pw_uid, service.pw_gid)
    shut.chmod(0o600)
    before = _rows(h, "SELECT count(*) FROM entry")
    for path in (private, shut):
        done = h.caseload(h.nurse, "import", str(path))
        assert (done.returncode, done.stdout) == (1, "")
        assert done.stderr == (f"caseload: {path} is not readable by {h.nurse}: give a UTF-8 CSV file your account "
                               "can read\n")
    checked = h.caseload(h.clerk, "protocol", "check", str(h.store))
    assert checked.returncode == 1
    assert checked.stderr == (f"caseload: {h.store} is not readable by {h.clerk}: give the clinic's protocol TOML file "
                              "your account can read\n")
    assert _rows(h, "SELECT count(*) FROM entry") == before
    done = h.caseload(h.nurse, "import", str(hers))  # her own file, which the service may read too (0644)
    assert done.returncode == 0, done.stderr
    assert _rows(h, "SELECT count(*) FROM entry") == [(before[0][0] + 1,)]


def test_over_a_store_too_damaged_to_name_its_admins_only_the_hosts_admin_restores(host):
    """The clerk's own store, in which she made herself admin, is no key to a damaged one: only root
    or the admin account host setup named may restore over a store whose staff cannot be read."""
    h = host
    service = pwd.getpwnam(h.service)
    backups = h.base / "backups"  # a folder the service writes and everyone may read
    backups.mkdir()
    os.chown(backups, service.pw_uid, service.pw_gid)
    backups.chmod(0o755)
    done = h.caseload(h.admin, "backup", str(backups / "good.db"))
    assert done.returncode == 0, done.stderr
    (backups / "good.db").chmod(0o644)
    hers = h.base / "clerk"
    hers.mkdir()
    os.chown(hers, pwd.getpwnam(h.clerk).pw_uid, -1)
    made = h.as_user(h.clerk, "sh", "-c", f"umask 022; {h.program} --db {hers / 'mine.db'} init --admin eve "
                                          "--name 'Eve Clerk' && chmod 644 " + str(hers / "mine.db"))
    assert made.returncode == 0, made.stderr
    with open(h.store, "r+b") as f:  # its header gone: SQLite no longer reads it as a database
        f.write(b"\0" * 100)
    damaged = h.store.read_bytes()
    refused = h.caseload(h.clerk, "restore", str(hers / "mine.db"), "--force")
    assert (refused.returncode, refused.stdout) == (1, "")
    assert refused.stderr == (f"caseload: {h.store} is too damaged to say who its admins are, so only the host's "
                              f"owner of it (root, {h.service}, {h.admin}) may restore over it; '{h.clerk}' is not: "
                              "ask one of them\n")
    assert h.store.read_bytes() == damaged and not list(h.store.parent.glob("*.replaced-*"))
    restored = h.caseload(h.admin, "restore", str(backups / "good.db"))
    assert restored.returncode == 0, restored.stderr
    assert h.store.stat().st_uid == service.pw_uid
    assert _rows(h, "SELECT by_staff, os_account FROM audit WHERE action = 'store.restore'") == [
        ("(host owner)", h.admin)]
    assert _rows(h, "SELECT id, role FROM staff ORDER BY id") == [
        ("ada", "admin"), ("nell", "nurse"), ("phil", "phone")]
    assert h.caseload(h.admin, "check").returncode == 0
