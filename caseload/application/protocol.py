"""The clinic protocol in force: a numbered version stored in the store, changed only by an admin.

A protocol file is only an import and export format: `protocol use FILE` checks a file and stores
its settings as a new version (audited, before and after); `protocol export FILE` writes the version
in force back out. A store upgraded from the time of files keeps the file it named as version 1 when
it still read as valid, else the defaults, with the reason recorded: no reader ever falls back to
the defaults because a file cannot be read.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from pathlib import Path

from caseload.core.parse import InputError
from caseload.core.protocol_file import overrides_of, parse_protocol, protocol_from_values, protocol_text
from caseload.core.settings import Protocol
from caseload.application import safe_file
from caseload.application.context import Context
from caseload.application.errors import Refused
from caseload.application.input_file import read_named_file
from caseload.application.recompute import RefreshReport, plan_refresh, write_refresh
from caseload.store import Store

MAX_BYTES = 256 * 1024


@dataclass(frozen=True)
class ProtocolInUse:
    """The version in force: its settings, who set it, when and from where."""

    version: int
    set_at: str
    set_by: str
    source: str
    protocol: Protocol

    def overrides(self) -> dict[str, float | int]:
        return overrides_of(self.protocol)


def read_protocol_file(path: str) -> Protocol:
    """The protocol a file sets, or InputError with one line naming the file."""
    data = read_named_file(path, MAX_BYTES, "the clinic's protocol TOML file")
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError:
        raise InputError(f"{path}: not UTF-8 text: save the protocol file as UTF-8 TOML") from None
    return parse_protocol(text, path)


def protocol_in_use(store: Store) -> ProtocolInUse:
    """The stored version in force, checked as a file would be (a setting this code no longer
    accepts is refused with one line, never replaced by its default)."""
    stored = store.protocol.current()
    protocol = protocol_from_values(stored.overrides, f"protocol version {stored.version} in the store")
    return ProtocolInUse(stored.version, stored.set_at, stored.set_by, stored.source,
                         replace(protocol, version=stored.version))  # fmt: skip


def show_protocol(ctx: Context) -> ProtocolInUse:
    """`protocol show`: the version in force and its settings."""
    ctx.require("protocol.view")
    return protocol_in_use(ctx.store)


def load_protocol(store: Store) -> Protocol:
    """The settings in force, carrying their version number."""
    return protocol_in_use(store).protocol


def use_protocol(ctx: Context, path: str) -> tuple[ProtocolInUse, RefreshReport]:
    """Admins: check the file, store its settings as the next version, then refresh every patient
    under it. The refresh is computed (and checked against mass resolution) before anything is written."""
    ctx.require("protocol.set")
    given = str(Path(path).expanduser())
    before = ctx.store.protocol.current()
    # Read by the path as given, so that a sudo caller's permissions are judged along it; the audit
    # names the file resolved, once it is known to be hers to read.
    protocol = replace(read_protocol_file(given), version=before.version + 1)
    chosen = str(Path(given).resolve())
    under_new = replace(ctx, protocol=protocol)
    found = plan_refresh(under_new)

    def work() -> None:
        if ctx.store.protocol.current().version != before.version:
            raise Refused("the clinic protocol was changed by someone else meanwhile: nothing was written, try again")
        ctx.store.protocol.add(ctx.actor, f"imported from {chosen}", overrides_of(protocol))

    ctx.store.transact(work, ctx.today)
    return protocol_in_use(ctx.store), write_refresh(under_new, found)


def export_protocol(ctx: Context, path: str) -> ProtocolInUse:
    """`protocol export FILE`: the version in force as a protocol file, owner-only like every export
    (through `safe_file`: never over the store, a backup or anything but a new file)."""
    ctx.require("protocol.view")
    in_use = protocol_in_use(ctx.store)
    header = f"caseload clinic protocol version {in_use.version}, set by {in_use.set_by} at {in_use.set_at}"
    target = Path(path)
    try:
        safe_file.check_target(target, ctx.store.path, force=False)
    except safe_file.TargetExists:  # the command has no --force: the file stays as it is
        raise InputError(f"{path}: already exists: give a new file name (an export never overwrites)") from None
    text = protocol_text(in_use.protocol, header)
    with safe_file.staged(target, lambda temp: temp.write_text(text, encoding="utf-8")) as file:
        file.publish()
    return in_use


def check_protocol_file(path: str) -> Protocol:
    """`protocol check`: the file's settings, or InputError; needs no store."""
    return read_protocol_file(path)
