"""Writing an export file so that it can neither destroy data nor leak while it is written.

Every export (the weekly summary in each format, the referral pack, the FHIR bundle, the protocol
file) checks its target with `check_target` and writes through `staged`: the content goes to a
temporary file created owner-only (0600) with O_EXCL in the target's own folder, and only a
finished file is renamed into place (a rename within one folder is atomic). The target is refused
when it is the store or one of its SQLite companion files (by any path, a symbolic link included),
any SQLite database (a backup), anything but a regular file (a device such as /dev/null, a named
pipe, a socket, a symbolic link), and when it exists unless `force`. It lives in the application
layer because the use cases that publish a file in the transaction of its audit row call it.
Failures of the file system (a folder that cannot be written, a full disk) come back as one line.
"""

from __future__ import annotations

import errno
import os
import secrets
import stat
from collections.abc import Callable, Iterable, Iterator
from contextlib import contextmanager, suppress
from pathlib import Path

from caseload.application.errors import InputError, Refused

SQLITE_HEADER = b"SQLite format 3\x00"
STORE_COMPANIONS = ("", "-wal", "-shm", "-journal")
NOT_REGULAR = (  # what lstat can find at a path besides a regular file or a folder
    (stat.S_ISLNK, "a symbolic link"),
    (stat.S_ISCHR, "a device"),
    (stat.S_ISBLK, "a device"),
    (stat.S_ISFIFO, "a named pipe"),
    (stat.S_ISSOCK, "a socket"),
)


class TargetExists(Refused):
    """The target is an existing regular file and `force` was not given. Its message is the command
    line's (`--force` replaces the file); the interface, which never replaces one, words it its own way."""

    def __init__(self, target: Path):
        super().__init__(f"{target} exists already: choose a new file, or add --force to replace it")
        self.target = target


def os_failure(err: OSError, doing: str) -> Refused:
    """One line for a file system failure, saying what to do about it."""
    if err.errno == errno.ENOSPC or err.errno == errno.EDQUOT:
        return Refused(f"the disk is full while {doing}: nothing was written, free some space and try again")
    if err.errno in (errno.EACCES, errno.EPERM, errno.EROFS):
        return Refused(f"no permission {doing}: choose a folder this account may write to")
    return Refused(f"{doing} failed ({err.strerror or err}): nothing was written")


def _is_database(path: Path) -> bool:
    """Whether the regular file at `path` starts as an SQLite database does. Opened without following
    a link and without blocking, and read only if it is still a regular file once open: a pipe
    swapped in after `check_target` looked would otherwise wait forever for a writer."""
    try:
        fd = os.open(path, os.O_RDONLY | os.O_NOFOLLOW | os.O_NONBLOCK)
    except OSError:
        return False
    with os.fdopen(fd, "rb") as f:
        return stat.S_ISREG(os.fstat(fd).st_mode) and f.read(len(SQLITE_HEADER)) == SQLITE_HEADER


def is_store_file(target: Path, store: Path) -> bool:
    """Whether `target` is the store or one of its companion files (`-wal`, `-shm`, `-journal`), by
    any path or link: made or replaced there, a file would be read by SQLite as part of the store."""
    # realpath follows every link (and, unlike Path.resolve, stops at a loop instead of raising).
    return os.path.realpath(target) in {f"{os.path.realpath(store)}{suffix}" for suffix in STORE_COMPANIONS}


def check_target(target: Path, store: Path, force: bool) -> None:
    """Refuse a target in a missing folder; the store or its companion files; a folder; anything but
    a regular file; an SQLite database; or, unless `force`, an existing file. Nothing is opened but
    a regular file, and that only to read its first bytes."""
    if not target.parent.is_dir():
        raise InputError(f"folder {target.parent} does not exist: create it first or choose another path")
    if is_store_file(target, store):
        raise Refused(f"{target} is the store itself: an export never overwrites it, choose another file")
    try:
        mode = os.lstat(target).st_mode
    except FileNotFoundError:
        return
    except OSError as err:
        raise os_failure(err, f"looking at {target}") from None
    if stat.S_ISDIR(mode):
        raise Refused(f"{target} is a folder: give a file path")
    for test, kind in NOT_REGULAR:
        if test(mode):
            raise Refused(f"{target} is {kind}, not a regular file: an export writes a new file or replaces a "
                          "regular one, choose another path")
    if _is_database(target):
        raise Refused(f"{target} is an SQLite database (a store or a backup): an export never overwrites it")
    if not force:
        raise TargetExists(target)


def check_targets(targets: Iterable[Path], store: Path, force: bool) -> None:
    for target in targets:
        check_target(target, store, force)


class Staged:
    """A finished temporary file waiting to be published at its target."""

    def __init__(self, temp: Path, target: Path, force: bool):
        self.temp, self.target, self.force = temp, target, force
        self.published = False

    def publish(self) -> None:
        """Put the file in place: a rename, or, without `force`, a link that fails if the target appeared."""
        try:
            if self.force:
                os.replace(self.temp, self.target)
            else:
                self._publish_new()
        except FileExistsError:
            raise Refused(f"{self.target} appeared while the export was written: nothing replaced, try again") from None
        except OSError as err:
            raise os_failure(err, f"putting {self.target} in place") from None
        self.published = True

    def _publish_new(self) -> None:
        try:
            os.link(self.temp, self.target)
        except FileExistsError:
            raise
        except OSError:  # a file system without hard links (FAT on a USB stick): rename after one more look
            if os.path.lexists(self.target):
                raise FileExistsError(self.target) from None
            os.replace(self.temp, self.target)
        else:
            self.temp.unlink()

    def withdraw(self) -> None:
        """Remove the published file again: the audit row that was to record it did not commit."""
        if self.published:
            self.target.unlink(missing_ok=True)


@contextmanager
def staged(target: Path, write: Callable[[Path], None], force: bool = False) -> Iterator[Staged]:
    """Write `target`'s content through `write(temp_path)` into a private temporary file beside it.

    Inside the block the caller publishes it (typically in the transaction of its audit row); a
    file published in a block that then fails is removed again, and whatever happens, the temporary
    file is gone afterwards.
    """
    temp = target.parent / f".{target.name}.{secrets.token_hex(6)}.partial"
    try:
        os.close(os.open(temp, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o600))
    except OSError as err:
        raise os_failure(err, f"writing {target}") from None
    file = Staged(temp, target, force)
    try:
        write(temp)
        yield file
    except OSError as err:
        file.withdraw()
        raise os_failure(err, f"writing {target}") from None
    except BaseException:
        file.withdraw()
        raise
    finally:
        with suppress(OSError):  # gone already once published; a failure to tidy must not hide the cause
            temp.unlink()
