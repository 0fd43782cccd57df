"""Writing an export file so that it can neither destroy data nor leak while it is written.

Every exporter writes through `staged`: the content goes to a temporary file created owner-only
(0600) with O_EXCL in the target's own folder, and only a finished file is renamed into place
(a rename within one folder is atomic). The target is refused when it is the store, one of its
SQLite companion files or any SQLite database (a backup), and when it exists unless `force`.
Failures of the file system (a folder that cannot be written, a full disk) come back as one line.
"""

from __future__ import annotations

import errno
import os
import secrets
from collections.abc import Callable, Iterable, Iterator
from contextlib import contextmanager, suppress
from pathlib import Path

from caseload.application.errors import Refused

SQLITE_HEADER = b"SQLite format 3\x00"
STORE_COMPANIONS = ("", "-wal", "-shm", "-journal")


def os_failure(err: OSError, doing: str) -> Refused:
    """One line for a file system failure, saying what to do about it."""
    if err.errno == errno.ENOSPC or err.errno == errno.EDQUOT:
        return Refused(f"the disk is full while {doing}: nothing was written, free some space and try again")
    if err.errno in (errno.EACCES, errno.EPERM, errno.EROFS):
        return Refused(f"no permission {doing}: choose a folder this account may write to")
    return Refused(f"{doing} failed ({err.strerror or err}): nothing was written")


def _is_database(path: Path) -> bool:
    try:
        with open(path, "rb") as f:
            return f.read(len(SQLITE_HEADER)) == SQLITE_HEADER
    except OSError:
        return False


def check_target(target: Path, store: Path, force: bool) -> None:
    """Refuse a target that is the store, its companion files or a database, or that exists (unless `force`)."""
    resolved = target.resolve()
    if resolved in {Path(f"{store.resolve()}{suffix}") for suffix in STORE_COMPANIONS}:
        raise Refused(f"{target} is the store itself: an export never overwrites it, choose another file")
    if resolved.is_dir():
        raise Refused(f"{target} is a folder: give a file path")
    if _is_database(resolved):
        raise Refused(f"{target} is an SQLite database (a store or a backup): an export never overwrites it")
    if resolved.exists() and not force:
        raise Refused(f"{target} exists already: choose a new file, or add --force to replace it")


def check_targets(targets: Iterable[Path], store: Path, force: bool) -> None:
    for target in targets:
        check_target(target, store, force)


class Staged:
    """A finished temporary file waiting to be published at its target."""

    def __init__(self, temp: Path, target: Path, force: bool):
        self.temp, self.target, self.force = temp, target, force

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


@contextmanager
def staged(target: Path, write: Callable[[Path], None], force: bool = False) -> Iterator[Staged]:
    """Write `target`'s content through `write(temp_path)` into a private temporary file beside it.

    Inside the block the caller publishes it (typically in the transaction of its audit row);
    whatever happens, the temporary file is gone afterwards.
    """
    temp = target.parent / f".{target.name}.{secrets.token_hex(6)}.partial"
    try:
        os.close(os.open(temp, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o600))
    except OSError as err:
        raise os_failure(err, f"writing {target}") from None
    try:
        write(temp)
        yield Staged(temp, target, force)
    except OSError as err:
        raise os_failure(err, f"writing {target}") from None
    finally:
        with suppress(OSError):  # gone already once published; a failure to tidy must not hide the cause
            temp.unlink()
