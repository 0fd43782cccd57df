"""Refusals raised by the use cases. Each message is one line, fit to show as it is: InputError for
what was typed, Refused for rules and permissions, StoreError for a file that cannot be used."""

from caseload.core.parse import InputError
from caseload.store import NotAStore, StoreDamaged, StoreError


class Refused(Exception):
    """A rule or permission refuses the action; nothing was written."""


class NotFound(Refused):
    """The named patient, staff member, entry or alert does not exist."""


__all__ = ["InputError", "NotAStore", "NotFound", "Refused", "StoreDamaged", "StoreError"]
