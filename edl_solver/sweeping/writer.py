"""A sweep file written in a thread of its own while the next tasks are solved, so that writing overlaps
solving (the HDF5 library holds the GIL for part of each write: measured in benchmarks/README.md).

Tasks' results wait in a bounded queue (a few tasks: memory stays flat however large the sweep); they are
written in order and committed (``SweepStore.commit``: their rows marked done) about twice a second and at
the end, so a killed sweep loses at most the last half second of work, and an interrupted one none.
"""

from __future__ import annotations

import queue
import threading
import time
from typing import Any

#: Tasks' results that may wait for the writer; the solver waits when it is this far ahead.
DEPTH = 4
#: Seconds between commits (two flushes each).
COMMIT_SECONDS = 0.5


class BackgroundWriter:
    """Writes tasks' results to a sweep store in a thread; ``put`` hands one over, ``close`` finishes.

    An error in the writer (a full disk) is raised in the caller at its next ``put`` or at ``close``; the
    results queued after it are dropped, and what was committed before stays in the file.
    """

    def __init__(self, store: Any, depth: int = DEPTH, commit_seconds: float = COMMIT_SECONDS):
        self.store, self.commit_seconds = store, commit_seconds
        self.queue: queue.Queue[dict[str, Any] | None] = queue.Queue(maxsize=depth)
        self.error: BaseException | None = None
        self.thread = threading.Thread(target=self._work, name="edl-sweep-writer", daemon=True)
        self.thread.start()

    def _work(self) -> None:
        last = time.monotonic()
        while (part := self.queue.get()) is not None:
            if self.error is not None:
                continue  # keep draining, so that the solver never blocks on a dead writer
            try:
                self.store.write(part, commit=False)
                if time.monotonic() - last >= self.commit_seconds:
                    self.store.commit()
                    last = time.monotonic()
            except BaseException as error:  # handed to the caller, which stops the sweep
                self.error = error
        if self.error is None:
            try:
                self.store.commit()
            except BaseException as error:
                self.error = error

    def put(self, part: dict[str, Any]) -> None:
        """Queue one task's results (waiting while the queue is full); raises the writer's error, if any."""
        self._raise()
        self.queue.put(part)

    def close(self) -> None:
        """Write and commit everything queued, stop the thread, and raise the writer's error, if any."""
        self.queue.put(None)
        self.thread.join()
        self._raise()

    def _raise(self) -> None:
        if self.error is not None:
            error, self.error = self.error, None
            raise error
