"""The clinic protocol in force: numbered versions, each the settings that differ from the defaults.

Append-only: a change is a new version, written with its audit row (before and after) in one
transaction. The newest version is the one in force.
"""

from __future__ import annotations

from dataclasses import dataclass

from caseload.core.model import Actor
from caseload.store.db import Database


@dataclass(frozen=True)
class StoredProtocol:
    """One version as stored: who set it, when, from where, and its overrides by name."""

    version: int
    set_at: str
    set_by: str
    source: str
    overrides: dict[str, float | int | str]


class ProtocolTable:
    def __init__(self, db: Database):
        self.db = db

    def current(self) -> StoredProtocol:
        """The version in force (the newest); every store has at least version 1."""
        row = self.db.conn.execute(
            "SELECT version, set_at, set_by, source FROM protocol_version ORDER BY version DESC LIMIT 1"
        ).fetchone()
        settings = self.db.conn.execute(
            "SELECT name, value FROM protocol_setting WHERE version = ? ORDER BY rowid", (row[0],)
        ).fetchall()
        return StoredProtocol(*row, overrides=dict(settings))

    def add(self, actor: Actor, source: str, overrides: dict[str, float | int | str]) -> StoredProtocol:
        """A new version in force; inside the caller's transaction, with its audit row."""
        before = self.current()
        version = before.version + 1
        self.db.conn.execute(
            "INSERT INTO protocol_version (version, set_at, set_by, source) VALUES (?, ?, ?, ?)",
            (version, self.db.now_text(), actor.id, source),
        )
        self.db.conn.executemany(
            "INSERT INTO protocol_setting (version, name, value) VALUES (?, ?, ?)",
            [(version, name, value) for name, value in overrides.items()],
        )
        after = self.current()
        self.db.audit(actor, "protocol.use", "protocol_version", version,
                      before=_audit_view(before), after=_audit_view(after))  # fmt: skip
        return after


def _audit_view(p: StoredProtocol) -> dict:
    return {"version": p.version, "source": p.source, "overrides": p.overrides}
