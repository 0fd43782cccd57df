"""Opening the interface from the command line."""

from __future__ import annotations

from caseload.cli.session import Session
from caseload.application.identity import os_account
from caseload.application.protocol import load_protocol


def open_interface(session: Session) -> None:
    """Build the interface for the session's store, day and identity, and run it until the user quits."""
    from caseload.tui.app import make_app  # Textual loads only when the interface opens

    with session.open_store() as store:
        app = make_app(store, session.today(store), os_account(), session.as_staff, load_protocol(store))
        app.run()
