"""What every command shares: finding the store, who is acting, today's date, clean refusals."""

from __future__ import annotations

import json
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import date
from pathlib import Path

import click
import pendulum
import platformdirs

from caseload.core.parse import InputError, one_line
from caseload.application.context import Context
from caseload.application.errors import Refused
from caseload.application.identity import os_account, resolve_actor
from caseload.application.protocol import load_protocol
from caseload.application.staff import DEFAULT_TIMEZONE
from caseload.store import Store, StoreError


def default_store_path() -> Path:
    return Path(platformdirs.user_data_dir("caseload")) / "caseload.db"


@contextmanager
def fail_cleanly():
    """Turn every refusal into one line on stderr and exit code 1."""
    try:
        yield
    except (InputError, Refused, StoreError) as err:
        click.echo(f"caseload: {printable(str(err))}", err=True)
        raise click.exceptions.Exit(1) from None
    except OverflowError as err:  # an id past SQLite's integers, a date past year 1 or 9999
        click.echo(f"caseload: a number or date is out of range ({printable(str(err))}): check the values given", err=True)
        raise click.exceptions.Exit(1) from None
    except UnicodeEncodeError as err:  # undecodable terminal bytes arrive as lone surrogates
        bad = printable(err.object[err.start:err.end])
        click.echo(f"caseload: the text '{printable(err.object[:40])}' holds {bad}, which is not UTF-8: "
                   "set the terminal to UTF-8 and type it again", err=True)
        raise click.exceptions.Exit(1) from None


def printable(text: str) -> str:
    """A message as one inert line: control characters (newlines, terminal escapes) and lone
    surrogates from undecodable input are shown escaped, whatever text the message quotes."""
    return "".join(ch if ch.isprintable() else ch.encode("unicode_escape").decode("ascii") for ch in text)


@dataclass
class Session:
    db_path: str | None
    as_staff: str | None
    today_text: str | None

    @property
    def path(self) -> Path:
        return Path(self.db_path) if self.db_path else default_store_path()

    def open_store(self, create: bool = False) -> Store:
        if not create and not self.path.exists():
            raise Refused(f"no store at {self.path}: create one with 'caseload init --admin ID --name NAME'")
        return Store(self.path)

    def today(self, store: Store) -> date:
        if self.today_text:
            try:
                return date.fromisoformat(self.today_text)
            except ValueError:
                raise InputError(f"--today '{one_line(self.today_text)}' not understood: use YYYY-MM-DD") from None
        zone = store.db.meta("timezone") or DEFAULT_TIMEZONE
        local = pendulum.now(zone)
        return date(local.year, local.month, local.day)

    def context(self, store: Store | None = None) -> Context:
        store = store or self.open_store()
        actor = resolve_actor(store, os_account(), self.as_staff)
        return Context(store, actor, self.today(store), load_protocol(store))


pass_session = click.make_pass_decorator(Session)


def echo_json(data) -> None:
    click.echo(json.dumps(data, indent=2, ensure_ascii=False, default=str))
