"""What a dialog that writes a file hears back from its worker: the file written, or why not."""

from __future__ import annotations

from pathlib import Path

from textual.message import Message


class FileWritten(Message):
    def __init__(self, path: Path) -> None:
        super().__init__()
        self.path = path


class FileRefused(Message):
    def __init__(self, reason: str) -> None:
        super().__init__()
        self.reason = reason
