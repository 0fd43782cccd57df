"""The clinic protocol in force for a store."""

from __future__ import annotations

from caseload.core.settings import DEFAULT_PROTOCOL, Protocol
from caseload.store import Store


def load_protocol(store: Store) -> Protocol:
    return DEFAULT_PROTOCOL
