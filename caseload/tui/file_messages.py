"""What a dialog that writes a file hears back from its worker: the file written, or why not."""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

from textual.message import Message

from caseload.application.errors import Refused
from caseload.application.safe_file import TargetExists


class FileWritten(Message):
    def __init__(self, path: Path) -> None:
        super().__init__()
        self.path = path


class FileRefused(Message):
    def __init__(self, reason: str) -> None:
        super().__init__()
        self.reason = reason


@contextmanager
def kept_if_there() -> Iterator[None]:
    """The interface never replaces a file (it has no --force): the refusal of an existing one, worded
    for the command line, names the remedy the dialog offers instead."""
    try:
        yield
    except TargetExists as err:
        raise Refused(f"{err.target} exists already: the interface keeps it, choose another file name") from None
