"""Opening the interface from the command line."""

from __future__ import annotations

from caseload.cli.global_options import GlobalOptions


def open_interface(options: GlobalOptions) -> None:
    """Build the interface on the options' Clinic and run it until the user quits."""
    from caseload.tui.app import make_app  # Textual loads only when the interface opens

    make_app(options.open_clinic()).run()
