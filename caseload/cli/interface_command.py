"""Opening the interface from the command line."""

from __future__ import annotations

import sys

import click

from caseload.cli.global_options import GlobalOptions


def open_interface(options: GlobalOptions, notice: str | None = None) -> None:
    """Build the interface on the options' Clinic and run it until the user quits; `notice` is
    shown on opening (what the command did before it)."""
    from caseload.tui.app import make_app  # Textual loads only when the interface opens

    make_app(options.open_clinic(), notice=notice).run()


def require_terminal() -> None:
    """The full-screen interface only on a terminal: piped or redirected, it would write escape codes
    into the file and wait for keys that never come. Exit code 2, a usage error."""
    if not (sys.stdin.isatty() and sys.stdout.isatty()):
        click.echo("caseload: the interface needs a terminal: run caseload in one, or give a command "
                   "(caseload --help lists them)", err=True)
        raise click.exceptions.Exit(2)
