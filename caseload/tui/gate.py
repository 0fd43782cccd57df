"""The interface's one way into the store, safe to use from worker threads.

The store holds one SQLite connection (opened with check_same_thread=False). Workers run in
threads, so every use goes through one lock: two threads never use the connection at once.
"""

from __future__ import annotations

import threading
from collections.abc import Callable
from datetime import date
from typing import TypeVar

from caseload.core.model import Actor
from caseload.core.settings import Protocol
from caseload.application.context import Context
from caseload.application.permissions import allowed
from caseload.store import Store

T = TypeVar("T")


class StoreGate:
    """The store, the day under review and who is acting, behind one lock."""

    def __init__(self, store: Store, today: date, protocol: Protocol, account: str, actor: Actor | None):
        self.store = store
        self.today = today
        self.protocol = protocol
        self.account = account
        self.actor = actor
        self._lock = threading.Lock()

    def context(self) -> Context:
        if self.actor is None:
            raise RuntimeError("nobody is signed in yet")
        return Context(self.store, self.actor, self.today, self.protocol)

    def call(self, use_case: Callable[..., T], *args, **kwargs) -> T:
        """Run a service use case with the acting staff member's context."""
        with self._lock:
            return use_case(self.context(), *args, **kwargs)

    def call_with_store(self, fn: Callable[..., T], *args, **kwargs) -> T:
        """Run a function that takes the store itself (sign-in, before there is an actor)."""
        with self._lock:
            return fn(self.store, *args, **kwargs)

    def may(self, action: str) -> bool:
        """Whether the acting staff member's role allows an action (the services check it anyway)."""
        return self.actor is not None and allowed(self.actor, action)
