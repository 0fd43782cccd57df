"""The store's files on disk: only a new store is made (never of someone else's file), owner-only with
its -wal and -shm; a write the disk cannot take, or a file this account may not write, is one line
naming the file, with nothing saved. Real SQLite files; a full disk is a real small tmpfs (root)."""

from __future__ import annotations

import os
import pwd
import shutil
import sqlite3
import stat
import tempfile
from pathlib import Path

import pytest

from caseload.application.staff import init_store
from caseload.store import NotAStore, Store, StoreDamaged, StoreError, migrations

ACCOUNT = "tester"


def listing(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir())}


def sqlite_file(path: Path, *statements: str) -> Path:
    conn = sqlite3.connect(path)
    for statement in statements:
        conn.execute(statement)
    conn.commit()
    conn.close()
    return path


@pytest.mark.parametrize("make, says", [
    (lambda p: None, "no store at {p}: create one with 'caseload init --admin ID --name NAME'"),
    (lambda p: p.touch(mode=0o644), "{p} is empty, not a caseload store: make one with 'caseload init "
                                            "--admin ID --name NAME', or give the store's path"),
    (lambda p: sqlite_file(p, "PRAGMA user_version = 0"),
     "{p} is empty, not a caseload store: make one with 'caseload init --admin ID --name NAME', or give the "
     "store's path"),
    (lambda p: sqlite_file(p, "CREATE TABLE staff (id)", "PRAGMA user_version = 3"),
     "{p} is an SQLite file but not a caseload store"),
], ids=["missing", "empty", "empty database", "no meta table"])
def test_opening_a_store_never_makes_one(tmp_path, make, says):
    """What every command but init does: a file that is not a caseload store is refused, untouched."""
    path = tmp_path / "e.db"
    make(path)
    before = listing(tmp_path)
    with pytest.raises(NotAStore) as refused:
        Store(path, must_exist=True)
    assert str(refused.value) == says.format(p=path)
    assert listing(tmp_path) == before  # nothing written, no -wal or -shm made beside it


def test_a_new_store_and_its_wal_and_shm_are_owner_only(tmp_path):
    """An empty file someone made (0644 under the usual umask) becomes a store only when asked to, and
    then owner-only; SQLite gives the -wal and -shm the store's mode."""
    path = tmp_path / "e.db"
    path.touch(mode=0o644)
    with Store(path) as store:
        init_store(store, "ada", "Ada Admin", ACCOUNT)
        store.transact(lambda: store.set_meta("clinic", "written"))  # the log and index exist while it is open
        modes = {p.name: stat.S_IMODE(p.stat().st_mode) for p in tmp_path.iterdir()}
    assert modes == {"e.db": 0o600, "e.db-wal": 0o600, "e.db-shm": 0o600}
    with Store(path, must_exist=True) as store:
        assert store.staff.get("ada") is not None


def test_a_store_is_not_made_over_the_log_of_one_that_is_gone(tmp_path):
    """SQLite would read a -wal left at the name as the new file's own."""
    path = tmp_path / "s.db"
    Path(f"{path}-wal").write_bytes(b"left over")
    with pytest.raises(StoreError) as refused:
        Store(path)
    assert str(refused.value) == (f"{path}-wal is left beside a store that is gone: remove it before making a store "
                                  f"at {path}")
    assert not path.exists()


def test_a_header_that_makes_no_database_is_damage(tmp_path):
    """SQLITE_NOTADB, as when the file's first bytes are overwritten: refused as damage, so that
    `restore` may replace it."""
    path = tmp_path / "s.db"
    with Store(path) as store:
        init_store(store, "ada", "Ada Admin", ACCOUNT)
    with open(path, "r+b") as f:
        f.write(b"\0" * 100)
    with pytest.raises(StoreDamaged) as refused:
        Store(path, must_exist=True)
    assert str(refused.value) == (f"{path} is damaged (file is not a database): run 'caseload check', then restore "
                                  "a backup with 'caseload restore FILE'")


@pytest.fixture
def one_mib(small_disk) -> Path:
    """A 1 MiB tmpfs: room for a store, then filled by the test."""
    return small_disk("1m")


def fill(folder: Path, leave: int = 0) -> Path:
    """Fill the disk holding `folder`, then free `leave` bytes."""
    filler = folder / "filler"
    with open(filler, "wb", buffering=0) as f:
        try:
            while True:
                f.write(b"\0" * 4096)
        except OSError:  # no space left on the device
            pass
    os.truncate(filler, max(filler.stat().st_size - leave, 0))
    return filler


@pytest.mark.parametrize("leave", [40 * 1024, 0], ids=["full at commit", "no room for the index"])
def test_a_full_disk_is_one_line_and_saves_nothing(one_mib, leave):
    """With a little room the write fails at COMMIT (SQLITE_FULL); with none, already opening the store
    (WAL mode's 32 KiB index) fails, which SQLite reports as an I/O error."""
    path = one_mib / "s.db"
    with Store(path) as store:
        init_store(store, "ada", "Ada Admin", ACCOUNT)
    filler = fill(one_mib, leave)
    says = f"the disk holding {path} is full: nothing was saved; free space and try again"
    with pytest.raises(StoreError) as refused:
        with Store(path, must_exist=True) as store:
            store.transact(lambda: store.set_meta("clinic", "x" * 200_000))
    assert str(refused.value) == says
    filler.unlink()
    with Store(path, must_exist=True) as store:
        assert store.meta("clinic") is None  # nothing of it was saved
        store.transact(lambda: store.set_meta("clinic", "written"))  # and with room again, writes go on
        assert store.check().ok


def test_a_store_left_read_only_by_a_read_only_use_names_the_file_in_the_way(tmp_path):
    """After the store was read while read-only (chmod 400), SQLite's -shm keeps that mode when the store
    is writable again, and refuses every write: the refusal names it. Run as an ordinary account
    (root writes any file); its folder is outside pytest's, which that account cannot enter."""
    if os.geteuid() != 0:
        pytest.skip("switching to another account needs root")
    nobody = pwd.getpwnam("nobody")
    folder = Path(tempfile.mkdtemp(prefix="caseload-ro-"))
    os.chown(folder, nobody.pw_uid, nobody.pw_gid)
    path = folder / "s.db"
    os.setegid(nobody.pw_gid)
    os.seteuid(nobody.pw_uid)
    try:
        with Store(path) as store:
            init_store(store, "ada", "Ada Admin", "nobody")
        path.chmod(0o400)
        with Store(path, must_exist=True) as store:
            with pytest.raises(StoreError, match="read-only for this account: nothing was written$"):
                store.transact(lambda: store.set_meta("clinic", "written"))
        path.chmod(0o600)
        shm = Path(f"{path}-shm")
        assert stat.S_IMODE(shm.stat().st_mode) == 0o400
        with Store(path, must_exist=True) as store:
            with pytest.raises(StoreError) as refused:
                store.transact(lambda: store.set_meta("clinic", "written"))
        said = str(refused.value)
        assert said.endswith(" read-only for this account: nothing was written")
        assert str(shm) in said and not said.startswith(f"{path} ")  # the -shm, not the store, is in the way
        for left in (shm, Path(f"{path}-wal")):
            if left.exists():
                left.chmod(0o600)
        with Store(path, must_exist=True) as store:
            store.transact(lambda: store.set_meta("clinic", "written"))
            assert store.meta("clinic") == "written"
    finally:
        os.seteuid(0)
        os.setegid(0)
        shutil.rmtree(folder)


def test_a_failed_upgrade_on_a_full_disk_says_the_disk_is_full(one_mib, monkeypatch):
    """Not 'upgrading failed': the step was sound, the disk had no room for it."""
    path = one_mib / "s.db"
    with Store(path) as store:
        init_store(store, "ada", "Ada Admin", ACCOUNT)
    steps = [*migrations.MIGRATIONS, lambda conn: conn.execute("CREATE TABLE big AS SELECT zeroblob(2000000) AS b")]
    monkeypatch.setattr(migrations, "MIGRATIONS", steps)
    monkeypatch.setattr(migrations, "LATEST", len(steps))
    with pytest.raises(StoreError) as refused:
        Store(path, must_exist=True)
    assert str(refused.value) == f"the disk holding {path} is full: nothing was saved; free space and try again"
