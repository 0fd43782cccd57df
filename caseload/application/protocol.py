"""The clinic protocol in force for a store: the TOML file named in the store's meta table, or the defaults.

A file that has gone bad (moved, edited into nonsense) never stops the store from opening: the
defaults apply and `protocol_in_use` carries the error for `caseload protocol show`.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from pathlib import Path

from caseload.core.parse import InputError
from caseload.core.protocol_file import parse_protocol, setting_rows
from caseload.core.settings import DEFAULT_PROTOCOL, Protocol
from caseload.application.context import Context
from caseload.application.recompute import RefreshReport, refresh_all
from caseload.store import Store

META_KEY = "protocol_file"
MAX_BYTES = 256 * 1024


@dataclass(frozen=True)
class ProtocolInUse:
    path: str | None  # None: no file chosen, the defaults apply
    protocol: Protocol
    error: str | None  # why the chosen file was refused; the defaults apply meanwhile

    def overrides(self) -> dict[str, float | int]:
        return {r.name: r.value for r in setting_rows(self.protocol) if r.overridden}


def read_protocol_file(path: str) -> Protocol:
    """The protocol a file sets, or InputError with one line naming the file."""
    file = Path(path)
    try:
        data = file.read_bytes()
    except FileNotFoundError:
        raise InputError(f"{path}: no such file: give the path of the clinic's protocol TOML file") from None
    except OSError as err:
        raise InputError(f"{path}: cannot be read ({err.strerror}): give a readable TOML file") from None
    if len(data) > MAX_BYTES:
        raise InputError(f"{path}: {len(data)} bytes is too large for a protocol file (at most {MAX_BYTES // 1024} KB)")
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError:
        raise InputError(f"{path}: not UTF-8 text: save the protocol file as UTF-8 TOML") from None
    return parse_protocol(text, path)


def protocol_in_use(store: Store) -> ProtocolInUse:
    path = store.meta(META_KEY)
    if path is None:
        return ProtocolInUse(None, DEFAULT_PROTOCOL, None)
    try:
        return ProtocolInUse(path, read_protocol_file(path), None)
    except InputError as err:
        return ProtocolInUse(path, DEFAULT_PROTOCOL, str(err))


def show_protocol(ctx: Context) -> ProtocolInUse:
    """`protocol show`: the settings in force, with any error that put the defaults back."""
    ctx.require("protocol.view")
    return protocol_in_use(ctx.store)


def load_protocol(store: Store) -> Protocol:
    return protocol_in_use(store).protocol


def use_protocol(ctx: Context, path: str) -> tuple[ProtocolInUse, RefreshReport]:
    """Admins: check the file, record it as the store's protocol, then refresh every patient under it."""
    ctx.require("protocol.set")
    chosen = str(Path(path).expanduser().resolve())
    protocol = read_protocol_file(chosen)
    in_use = ProtocolInUse(chosen, protocol, None)
    with ctx.store.atomic(ctx.today):
        before = ctx.store.meta(META_KEY)
        ctx.store.set_meta(META_KEY, chosen)
        ctx.store.audit.record(ctx.actor, "protocol.use", "meta", META_KEY, before={"path": before},
                               after={"path": chosen, "overrides": in_use.overrides()})
    report = refresh_all(replace(ctx, protocol=protocol))
    return in_use, report


def check_protocol_file(path: str) -> ProtocolInUse:
    """`protocol check`: the file's settings, or InputError; needs no store."""
    return ProtocolInUse(path, read_protocol_file(path), None)
