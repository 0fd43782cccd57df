"""Opening the interface from the command line."""

from __future__ import annotations

from caseload.cli.common import Session
from caseload.cli.views import list_table
from caseload.services import caseload as caseload_service


def open_interface(session: Session) -> None:
    """Until the interface lands, print the caseload list."""
    list_table(caseload_service.list_caseload(session.context()))
