"""Shared fixtures: a real store file in a temporary folder, staff of every role, a fixed day, and the
demo caseload built once per test run and copied for each module that reads it."""

from __future__ import annotations

import fcntl
import os
import pickle
import shutil
import subprocess
from collections.abc import Callable, Iterator
from dataclasses import dataclass, replace
from datetime import date
from pathlib import Path

import pytest

from caseload.core.model import Actor, Role
from caseload.application.context import Context
from caseload.application.demo import Demo, build_demo
from caseload.application.identity import os_account
from caseload.application.patients import add_patient
from caseload.application.staff import add_staff, init_store
from caseload.store import Store

TODAY = date(2026, 12, 1)
END_TO_END = ("tui", "robustness", "tools")  # folders whose tests drive the whole program; marked slow


# Workers per processor: the interface and whole-program tests spend about a third of their time
# waiting (on the app's timers and workers, on other processes), which a second worker per processor
# fills. On 2 cores the suite took 2 min 53 s to 3 min 19 s with four workers and 3 min 9 s with six;
# with two it had taken 3 min 58 s (with a slower demo build, 6.3 s against 3.6 s now, once per worker).
WORKERS_PER_PROCESSOR = 2


def pytest_xdist_auto_num_workers(config) -> int:
    """`-n auto` (the default): two workers per processor, but a run of single test files stays in one
    process, where starting workers would cost more than it saves."""
    named = [Path(str(arg).split("::")[0]) for arg in config.args]
    if named and all(path.is_file() for path in named):
        return 0
    processors = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count() or 1
    return WORKERS_PER_PROCESSOR * processors


def pytest_collection_modifyitems(items) -> None:
    """`-m "not slow"` runs the fast unit tests alone; CI runs everything."""
    for item in items:
        if item.path.relative_to(item.config.rootpath).parts[1:2] in [(name,) for name in END_TO_END]:
            item.add_marker(pytest.mark.slow)


@dataclass(frozen=True)
class BuiltDemo:
    path: Path
    demo: Demo  # its store closed: each module opens a copy of the file at `path`


@pytest.fixture(scope="session")
def demo_build(tmp_path_factory, worker_id) -> BuiltDemo:
    """The demo caseload as of TODAY, its admin mapped to the OS account 'tester': built once per test
    run (it replays months of history) by the first worker to need it, which the others wait for; tests
    reach it through `demo`, never directly."""
    run_folder = tmp_path_factory.getbasetemp()
    if worker_id != "master":
        run_folder = run_folder.parent  # the folder the workers' own folders share
    path, facts = run_folder / "demo-build" / "demo.db", run_folder / "demo-build" / "demo.pickle"
    with open(run_folder / "demo-build.lock", "w") as lock:
        fcntl.flock(lock, fcntl.LOCK_EX)
        if not facts.exists():
            path.parent.mkdir()
            built = build_demo(path, TODAY, "tester")
            built.store.close()
            facts.write_bytes(pickle.dumps(replace(built, store=None)))
    return BuiltDemo(path, pickle.loads(facts.read_bytes()))


def copy_store(source: Path, target: Path) -> Path:
    """A store file copied with its write-ahead log, if one is left."""
    for suffix in ("", "-wal"):
        if Path(f"{source}{suffix}").exists():
            shutil.copy2(f"{source}{suffix}", f"{target}{suffix}")
    return target


@pytest.fixture(scope="module")
def demo(demo_build, tmp_path_factory) -> Iterator[Demo]:
    """The demo caseload on a copy of its own for each test module, which may write to it."""
    store = Store(copy_store(demo_build.path, tmp_path_factory.mktemp("demo") / "demo.db"))
    yield replace(demo_build.demo, store=store)
    store.close()


@pytest.fixture
def store(tmp_path):
    s = Store(tmp_path / "caseload.db")
    yield s
    s.close()


@pytest.fixture
def admin(store) -> Actor:
    return init_store(store, "admin1", "Ada Admin", os_account())


@pytest.fixture
def staffed(store, admin):
    """A store with one member of each role; returns {role: Actor}."""
    ctx = Context(store, admin, TODAY)
    actors = {Role.ADMIN: admin}
    for sid, role in (("phone1", "phone"), ("nurse1", "nurse"), ("super1", "supervisor")):
        member = add_staff(ctx, sid, f"Test {role}", role)
        actors[member.role] = Actor(member, "tester")
    return actors


@pytest.fixture
def as_role(store, staffed):
    """Context factory: as_role(Role.NURSE) acts as that role's staff member on TODAY."""

    def make(role: Role, today: date = TODAY) -> Context:
        return Context(store, staffed[role], today)

    return make


@pytest.fixture
def patient(as_role):
    return add_patient(as_role(Role.NURSE), "P0001", "Test Patient", "1992-05-17", nurse="nurse1")


@pytest.fixture
def small_disk(tmp_path) -> Iterator[Callable[[str], Path]]:
    """small_disk("64k"): a folder on a tmpfs of that size, unmounted after the test. Mounting needs
    root (CI runs as root); elsewhere the test is skipped."""
    mounted: list[Path] = []

    def mount(size: str) -> Path:
        folder = tmp_path / f"small-{len(mounted)}"
        folder.mkdir()
        if os.geteuid() != 0 or subprocess.run(["mount", "-t", "tmpfs", "-o", f"size={size}", "tmpfs", str(folder)],
                                               capture_output=True).returncode:
            pytest.skip("mounting a small tmpfs needs root")
        mounted.append(folder)
        return folder

    yield mount
    for folder in mounted:
        subprocess.run(["umount", str(folder)], check=True)
