"""Running queued jobs: a thread inside the app, or a ``tankbook worker`` process.

Both loop over :func:`services.runner.run_one`; any number of them may run against one
database (see :mod:`services.jobs` for how claims stay exclusive).
"""

from __future__ import annotations

import datetime as dt
import logging
import threading

from ...db.session import Database
from . import queue as jobs
from . import runner

log = logging.getLogger(__name__)


class Worker:
    """Runs jobs until stopped; ``wake()`` skips the wait when a request queued one."""

    def __init__(
        self,
        db: Database,
        *,
        poll_seconds: float = 2.0,
        stale_after: dt.timedelta = jobs.STALE_AFTER,
        name: str | None = None,
    ):
        self.db = db
        self.poll_seconds = poll_seconds
        self.stale_after = stale_after
        self.name = name or f"{jobs.worker_name()}:thread"
        self._stop = threading.Event()
        self._wake = threading.Event()
        self._thread: threading.Thread | None = None

    def start(self) -> None:
        self._thread = threading.Thread(target=self.run, name="tankbook-worker", daemon=True)
        self._thread.start()

    def wake(self) -> None:
        self._wake.set()

    def stop(self, timeout: float = 30.0) -> None:
        self._stop.set()
        self._wake.set()
        if self._thread is not None:
            self._thread.join(timeout)

    @property
    def stopping(self) -> bool:
        return self._stop.is_set()

    def run(self) -> None:
        while not self._stop.is_set():
            try:
                while not self._stop.is_set() and runner.run_one(self.db, self.name, self.stale_after):
                    pass
            except Exception:  # a broken database connection must not end the loop
                log.exception("worker %s: error while running jobs", self.name)
            self._wake.wait(self.poll_seconds)
            self._wake.clear()
