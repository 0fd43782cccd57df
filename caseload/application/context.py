"""What every use case needs: the store, who is acting, the day it is, and the clinic protocol."""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import date

from caseload.core.model import Actor
from caseload.core.settings import DEFAULT_PROTOCOL, Protocol
from caseload.application.permissions import require
from caseload.store import Store


@dataclass
class Context:
    store: Store
    actor: Actor
    today: date
    protocol: Protocol = field(default=DEFAULT_PROTOCOL)

    def require(self, action: str) -> None:
        require(self.actor, action)
