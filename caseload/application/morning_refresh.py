"""The morning refresh as a job of its own: cron runs `caseload alerts --refresh` as its own
process, and the interface runs `run_morning_refresh` in a worker thread on a connection of its own,
so neither holds the store's write lock for more than one short batch at a time."""

from __future__ import annotations

from datetime import date
from pathlib import Path

from caseload.core.model import Actor
from caseload.application.context import Context
from caseload.application.protocol import load_protocol
from caseload.application.recompute import Progress, RefreshReport, refresh_all
from caseload.store import Store


def run_morning_refresh(path: Path, actor: Actor, today: date, progress: Progress | None = None) -> RefreshReport:
    """Every patient refreshed as of `today` under the protocol in force, through a store connection
    opened here and closed at the end. `progress(stage, done, total)` is called from this thread."""
    with Store(path) as store:
        return refresh_all(Context(store, actor, today, load_protocol(store)), progress)
