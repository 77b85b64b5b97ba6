"""Where the API's jobs run: two lanes of worker threads, bounded queues, cancellation.

- **Lanes by size.** A request whose circuit text is short (``SMALL_TEXT_CHARS``) runs
  in the small lane, everything else in the large lane, each with its own workers, so
  a one-resistor solve never waits behind forty big ones.
- **Bounded queues.** Each lane admits at most its workers plus ``*_QUEUE`` waiting
  jobs; one more is answered at once with 503 and ``Retry-After`` (``LaneFull``)
  rather than left to wait without end.
- **Abandoned work stops.** While a job waits or runs, the handler also waits for the
  client's ``http.disconnect``. A job still queued when its client goes is dropped
  before it starts; a running one is stopped by raising ``JobCancelled`` in its worker
  thread (``PyThreadState_SetAsyncExc``): it lands at the thread's next Python
  instruction, so only a stretch of numpy/SuperLU C code already started runs on.
  The arming and disarming of that exception are under one lock per job, so it can
  never reach a thread after the job has ended.
"""

from __future__ import annotations

import asyncio
import ctypes
import functools
import threading
from concurrent.futures import CancelledError, ThreadPoolExecutor

#: Circuit texts up to this many characters go to the small lane (a few dozen lines:
#: the hand-written circuits of the page, the samples).
SMALL_TEXT_CHARS = 4096


class JobCancelled(BaseException):
    """Raised inside a worker thread whose client has gone.

    A ``BaseException`` so that the core's ``except Exception`` blocks do not swallow it.
    """


class LaneFull(Exception):
    """The lane's queue is full: the request is refused at once (503, Retry-After)."""

    def __init__(self, lane: str, retry_after: int):
        super().__init__(f"the {lane} lane is full")
        self.lane, self.retry_after = lane, retry_after


class ClientGone(Exception):
    """The client disconnected before its answer was ready; nothing is sent."""


def _raise_in(thread_id: int, exc_type) -> None:
    """Arm (``exc_type``) or disarm (None) an asynchronous exception in a thread."""
    ctypes.pythonapi.PyThreadState_SetAsyncExc(
        ctypes.c_ulong(thread_id), ctypes.py_object(exc_type) if exc_type else None)


class _Job:
    """One call in a worker thread that the event loop can cancel at any moment."""

    def __init__(self, fn):
        self.fn = fn
        self.lock = threading.Lock()
        self.state = "queued"          # queued → running → done, or queued → dropped
        self.thread_id = 0

    def __call__(self):
        with self.lock:
            if self.state != "queued":
                raise JobCancelled()
            self.state, self.thread_id = "running", threading.get_ident()
        try:
            return self.fn()
        finally:
            self._disarm()

    def _disarm(self) -> None:
        # A JobCancelled armed just before the job ended may land anywhere up to here,
        # even inside this method: retry until the state is 'done' under the lock and
        # any pending exception is cleared; after that, nothing can arm one again.
        while True:
            try:
                with self.lock:
                    self.state = "done"
                    _raise_in(self.thread_id, None)
                return
            except JobCancelled:
                continue

    def cancel(self) -> None:
        """Drop the job if it has not started; stop it if it is running."""
        with self.lock:
            if self.state == "queued":
                self.state = "dropped"
            elif self.state == "running":
                self.state = "cancelling"
                _raise_in(self.thread_id, JobCancelled)


class Lane:
    """Worker threads and a bound on the jobs admitted (running plus waiting)."""

    def __init__(self, name: str, workers: int, queue: int, retry_after: int):
        self.name, self.retry_after = name, retry_after
        self.capacity = workers + queue
        self.admitted = 0
        self._count = threading.Lock()
        self.workers = workers
        self._pool: ThreadPoolExecutor | None = None

    @property
    def pool(self) -> ThreadPoolExecutor:
        """The worker threads, started on first use (again after a shutdown: an app
        served more than once, as test clients do, runs its lifespan each time)."""
        if self._pool is None:
            self._pool = ThreadPoolExecutor(max_workers=self.workers,
                                            thread_name_prefix=f"phasorbench-{self.name}")
        return self._pool

    def admit(self) -> bool:
        with self._count:
            if self.admitted >= self.capacity:
                return False
            self.admitted += 1
            return True

    def release(self) -> None:
        """Called from the worker thread as the job ends (the loop may be gone)."""
        with self._count:
            self.admitted -= 1

    def shutdown(self) -> None:
        pool, self._pool = self._pool, None
        if pool is not None:
            pool.shutdown(wait=False, cancel_futures=True)


class JobRunner:
    """The two lanes of one app (``app.state.jobs``)."""

    def __init__(self, settings):
        self.small = Lane("small", settings.small_workers, settings.small_queue,
                          settings.retry_after_s)
        self.large = Lane("large", settings.solve_workers, settings.large_queue,
                          settings.retry_after_s)

    def lane_for(self, text: str | None, heavy: bool = False) -> Lane:
        if not heavy and text is not None and len(text) <= SMALL_TEXT_CHARS:
            return self.small
        return self.large

    def shutdown(self) -> None:
        self.small.shutdown()
        self.large.shutdown()

    async def run(self, receive, lane: Lane, fn, *args):
        """``fn(*args)`` in ``lane``; raises ``LaneFull``, ``ClientGone`` or fn's error.

        ``receive`` is the request's ASGI receive, after its body was read: its next
        message is ``http.disconnect`` when the client goes.
        """
        if not lane.admit():
            raise LaneFull(lane.name, lane.retry_after)
        job = _Job(functools.partial(fn, *args))
        submitted = lane.pool.submit(job)
        # A job counts against its lane until its thread is free again, not until its
        # client has gone: a cancelled job still inside C code holds its worker.
        submitted.add_done_callback(lambda _: lane.release())
        future = asyncio.wrap_future(submitted)
        gone = asyncio.ensure_future(_disconnected(receive))
        try:
            await asyncio.wait({future, gone}, return_when=asyncio.FIRST_COMPLETED)
        except asyncio.CancelledError:          # the server's own task is cancelled
            job.cancel()
            future.cancel()
            raise
        finally:
            gone.cancel()
        if not future.done():
            job.cancel()
            future.cancel()                     # a queued job leaves the pool's queue
            raise ClientGone()
        try:
            return future.result()
        except (JobCancelled, CancelledError):
            raise ClientGone() from None


async def _disconnected(receive) -> None:
    """Return when the client disconnects (other messages are ignored)."""
    while True:
        message = await receive()
        if message.get("type") == "http.disconnect":
            return
