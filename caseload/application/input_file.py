"""Files a staff member names on the command line (a CSV to import, a protocol to check or use),
read for her: regular files only, never more than a limit, and through a shared host's sudo rule
only a file she could read herself.

Through that rule caseload runs as the service account, which may read the store, its backups and
whatever else the service owns. A path typed by a staff member must not become a way to read those,
nor to make the service read an endless device or hang on a pipe. So, for a sudo caller, the path is
looked up here one directory at a time as the kernel would for her: every directory passed must be
searchable by her uid or one of her groups, every symbolic link is followed from where it lies, and
her read permission is judged on the very file then opened, so that nothing can be swapped in between
the check and the read. POSIX ACLs are not consulted: the mode bits alone decide.
"""

from __future__ import annotations

import errno
import os
import stat

from caseload.core.parse import InputError
from caseload.application.identity import Caller, sudo_caller

MAX_LINKS = 40  # the kernel's own limit on symbolic links followed in one lookup
# O_PATH (Linux) opens a directory to look up names in without needing to read it; elsewhere a
# plain read-only open serves.
DIRECTORY = getattr(os, "O_PATH", os.O_RDONLY) | os.O_DIRECTORY | os.O_NOFOLLOW | os.O_CLOEXEC
# O_NONBLOCK: should a pipe be swapped in after the check, opening it returns at once (and the
# check after opening refuses it) rather than waiting for a writer.
FILE = os.O_RDONLY | os.O_NONBLOCK | os.O_NOCTTY | os.O_CLOEXEC


def may(info: os.stat_result, caller: Caller, bit: int) -> bool:
    """Whether the mode bits give `caller` permission `bit` (os.R_OK or os.X_OK) on a file with this
    owner, group and mode: the kernel reads the owner's bits for her own file, else the group's for
    a group she is in, else the others' (and never falls through to a later class); root may read
    and search anything."""
    if caller.uid == 0:
        return True
    if info.st_uid == caller.uid:
        shift = 6
    elif info.st_gid in caller.gids:
        shift = 3
    else:
        shift = 0
    return bool(info.st_mode >> shift & bit)


def _size(limit: int) -> str:
    for unit, name in ((1024 * 1024, "MB"), (1024, "KB")):
        if limit % unit == 0:
            return f"{limit // unit} {name}"
    return f"{limit} bytes"


class _NotReadable(Exception):
    """The caller lacks a permission on the way to the file or on the file itself."""


class _NotRegular(Exception):
    """A pipe, device or socket: reading one could wait for ever or never end."""


def _parts(path: str) -> list[str]:
    return [part for part in path.split("/") if part not in ("", ".")]


def _lookup(path: str, caller: Caller) -> tuple[int, str]:
    """The directory holding the file `path` names (an open descriptor, the caller closes it) and
    the file's name in it, which is not a symbolic link."""
    fd = os.open("/" if path.startswith("/") else ".", DIRECTORY)
    parts, links = _parts(path), 0
    try:
        while parts:
            # Looking up any name in a directory, ".." included, needs search permission on it.
            if not may(os.fstat(fd), caller, os.X_OK):
                raise _NotReadable
            name = parts.pop(0)
            info = os.stat(name, dir_fd=fd, follow_symlinks=False)
            if stat.S_ISLNK(info.st_mode):
                links += 1
                if links > MAX_LINKS:
                    raise OSError(errno.ELOOP, os.strerror(errno.ELOOP))
                target = os.readlink(name, dir_fd=fd)
                if target.startswith("/"):
                    os.close(fd)
                    fd = os.open("/", DIRECTORY)
                parts[:0] = _parts(target)
            elif parts:
                inner = os.open(name, DIRECTORY, dir_fd=fd)  # O_NOFOLLOW: a link swapped in fails
                os.close(fd)
                fd = inner
            else:
                return fd, name
        return fd, "."  # the path names a directory ("/", ".", or a link to one)
    except BaseException:
        os.close(fd)
        raise


def _open(path: str, caller: Caller | None) -> int:
    """A read-only descriptor on the regular file at `path`; a pipe or device is never opened."""
    # Without a sudo caller the process reads as the account it acts for and the kernel checks.
    folder, name = (None, path) if caller is None else _lookup(path, caller)
    follow = caller is None  # for a caller, `_lookup` has followed every link already
    try:
        mode = os.stat(name, dir_fd=folder, follow_symlinks=follow).st_mode
        if stat.S_ISDIR(mode):
            raise IsADirectoryError
        if not stat.S_ISREG(mode):
            raise _NotRegular
        fd = os.open(name, FILE | (0 if follow else os.O_NOFOLLOW), dir_fd=folder)
    finally:
        if folder is not None:
            os.close(folder)
    opened = os.fstat(fd)
    if not stat.S_ISREG(opened.st_mode) or (caller is not None and not may(opened, caller, os.R_OK)):
        os.close(fd)
        raise _NotReadable if stat.S_ISREG(opened.st_mode) else _NotRegular
    return fd


def read_file_as(caller: Caller | None, path: str, limit: int, what: str) -> bytes:
    """The bytes of the regular file at `path` (at most `limit`), read for `caller` (None: for the
    account this process runs as); or InputError with one line naming the path. `what` is the kind
    of file accepted, as in "give a UTF-8 CSV file"."""
    try:
        with os.fdopen(_open(path, caller), "rb") as file:
            data = file.read(limit + 1)  # one byte past the limit tells a file at the limit from a longer one
    except _NotReadable:
        raise InputError(f"{path} is not readable by {caller.account}: give {what} your account can read") from None
    except _NotRegular:
        raise InputError(f"{path}: not a regular file (a pipe, device or socket): give {what}") from None
    except IsADirectoryError:
        raise InputError(f"{path}: is a folder: give {what}") from None
    except (FileNotFoundError, NotADirectoryError):
        raise InputError(f"{path}: no such file: give {what}") from None
    except OSError as err:
        raise InputError(f"{path}: cannot be read ({err.strerror}): give {what}") from None
    if len(data) > limit:
        raise InputError(f"{path}: larger than {_size(limit)}: give {what} of at most {_size(limit)}")
    return data


def read_named_file(path: str, limit: int, what: str) -> bytes:
    """`read_file_as` for whoever this process acts for: through a sudo rule, the staff member who ran it."""
    return read_file_as(sudo_caller(), path, limit, what)
