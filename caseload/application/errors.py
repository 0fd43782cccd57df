"""Refusals raised by the services. Each message is one line, fit to show as it is."""

from caseload.core.parse import InputError


class Refused(Exception):
    """A rule or permission refuses the action; nothing was written."""


class NotFound(Refused):
    """The named patient, staff member, entry or alert does not exist."""


__all__ = ["InputError", "NotFound", "Refused"]
