"""What every command shares: the global options, the one Clinic they open, clean refusals."""

from __future__ import annotations

import functools
import json
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import date
from pathlib import Path

import click
import platformdirs

from caseload.application.clinic import Clinic, Identity
from caseload.application.errors import InputError, Refused, StoreError
from caseload.presentation.safe_text import printable, quoted


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


def option_date(text: str | None, option: str) -> date | None:
    if not text:
        return None
    try:
        return date.fromisoformat(text)
    except ValueError:
        raise InputError(f"{option} {quoted(text)} not understood: use YYYY-MM-DD") from None


@dataclass
class GlobalOptions:
    """`--db`, `--as`, `--today` and `--maintenance-date` as given; `date_of_record` only from tests,
    which pass it as click's `obj` (never through the environment)."""

    db_path: str | None
    as_staff: str | None
    today_text: str | None
    maintenance_text: str | None
    date_of_record: date | None = None
    clinic: Clinic | None = None

    @property
    def path(self) -> Path:
        return Path(self.db_path) if self.db_path else default_store_path()

    @property
    def as_of(self) -> date | None:
        return option_date(self.today_text, "--today")

    def open_clinic(self) -> Clinic:
        """The Clinic on the store (opened once per command, closed when the command ends)."""
        if self.clinic is None:
            if not self.path.exists():
                raise Refused(f"no store at {self.path}: create one with 'caseload init --admin ID --name NAME'")
            self.clinic = Clinic.open(
                self.path, Identity.from_os(self.as_staff), as_of=self.as_of,
                maintenance_date=option_date(self.maintenance_text, "--maintenance-date"),
                date_of_record=self.date_of_record,
            )
            click.get_current_context().call_on_close(self.clinic.close)
        return self.clinic


pass_options = click.make_pass_decorator(GlobalOptions)


def pass_clinic(command):
    """Give the command the Clinic opened on the store, as its first argument."""

    @functools.wraps(command)
    @pass_options
    def wrapper(options: GlobalOptions, *args, **kwargs):
        return command(options.open_clinic(), *args, **kwargs)

    return wrapper


def echo_json(data) -> None:
    click.echo(json.dumps(data, indent=2, ensure_ascii=False, default=str))
