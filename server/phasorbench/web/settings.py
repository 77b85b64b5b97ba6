"""Settings of the local server, declared once with their defaults and reasons.

Every limit the server enforces is a named constant here, so the README, the
``serve`` command's ``--help`` and the tests all read the same numbers.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path

#: Loopback only by default: the workbench is a personal tool, not a shared service.
DEFAULT_HOST = "127.0.0.1"
DEFAULT_PORT = 8000
#: The page draws only the table rows in view (rows.py), so it stays responsive at
#: tens of thousands of elements; beyond this a solve takes long enough to look like
#: a hang. ``serve --max-elements`` raises it (a 300×300 mesh has 270,000).
MAX_ELEMENTS = 50_000
#: Request body bytes allowed per element of the limit: an element line is 30 to 60
#: bytes, so a body this big is a circuit within the element limit, and anything
#: larger is a mistake (a pasted binary, a runaway script) refused before it is read.
BODY_BYTES_PER_ELEMENT = 128
#: The body limit never goes below this (small limits still take a commented file).
MIN_BODY_BYTES = 2 * 1024 * 1024


def body_limit(max_elements: int) -> int:
    """The request body limit that goes with an element limit (``--max-body-mb`` unset)."""
    return max(MIN_BODY_BYTES, BODY_BYTES_PER_ELEMENT * max_elements)


MAX_BODY_BYTES = body_limit(MAX_ELEMENTS)
#: Elements whose waveforms or phasors one request may ask for (one SVG each).
MAX_VIEW_ELEMENTS = 24
#: Bounds of a picture size a request may ask for: smaller is unreadable, larger is
#: no screen's panel and only makes the reply grow.
MIN_PICTURE_PX = 240
MAX_PICTURE_PX = 2400
#: Solves run in worker threads so one heavy circuit never freezes the event loop;
#: two cores here, so a few workers keep the page responsive without thrashing.
SOLVE_WORKERS = 4
#: Seconds one formula request's symbolic work may take before its worker process is
#: stopped (a symbolic solve can grow without bound; the error says to keep fewer symbols).
FORMULA_SECONDS = 10.0
#: Worker threads of the small lane (circuit texts up to jobs.SMALL_TEXT_CHARS): a
#: hand-sized circuit is answered in milliseconds even while the large lane is full.
SMALL_WORKERS = 2
#: Jobs that may wait for a large-lane worker beyond those running. Sixteen mid-size
#: solves (about a second each) drain in a few seconds on four workers, well inside the
#: page's request timeout; one more is answered 503 at once instead of waiting longer.
LARGE_QUEUE = 16
#: Jobs that may wait in the small lane (each takes milliseconds).
SMALL_QUEUE = 64
#: Seconds a 503 asks the client to wait before trying again (Retry-After).
RETRY_AFTER_S = 2
#: How often a Python thread hands over the interpreter lock (``sys.setswitchinterval``)
#: while the server runs. The default 5 ms lets four busy solve threads keep the event
#: loop and the small lane waiting 5 ms per step each: under 100 concurrent mid-size
#: solves a one-resistor solve took 20 s; at 1 ms it took 3.8 s (benchmarks/bench_load.py).
SWITCH_INTERVAL_S = 0.001
#: Seconds a client has to send a request head (line and headers), from the moment it
#: connects or got its last answer: a browser sends it in one packet; a client that
#: trickles it a byte at a time only holds a connection open.
HEADER_TIMEOUT_S = 10.0
#: Seconds a client has to send a whole body once the head arrived: 2 MB on loopback
#: takes milliseconds; a body that stalls is answered 408 and its connection closed.
BODY_TIMEOUT_S = 30.0
#: Seconds the page waits for one answer before it says the server is not answering
#: (and re-enables Solve): a 5,000-element solve takes seconds, a full queue ahead of it
#: a few times that; a minute without an answer is a frozen or stopped server.
PAGE_TIMEOUT_S = 60.0
#: Names under which the server is always reachable from this machine itself.
LOOPBACK_NAMES = ("127.0.0.1", "localhost", "::1")
#: Bind addresses that mean "every interface" (then the Host check needs names given
#: explicitly with ``allowed_hosts``).
WILDCARD_HOSTS = ("0.0.0.0", "::", "")

_REPO_ROOT = Path(__file__).resolve().parents[3]


def _folder(env: str, default: Path) -> Path:
    return Path(os.environ.get(env, str(default)))


@dataclass(frozen=True)
class Settings:
    """What one server instance needs to know.

    Parameters
    ----------
    host, port
        Where the server listens; the Host guard accepts these plus the loopback
        names. ``port`` 0 or None accepts any port in a Host header (tests with an
        ephemeral port).
    max_body_bytes
        Largest request body read; a larger one is answered 413.
    max_elements
        Largest circuit solved; a larger one is answered 422 with a message.
    formula_seconds
        Time limit of one formula's symbolic work; past it, 422 saying so.
    allowed_hosts
        Extra host names accepted in the Host header (for example a machine name
        when serving on every interface).
    initial_sample
        Name of the sample the page loads when the browser has no saved circuit;
        None means the first sample.
    """

    host: str = DEFAULT_HOST
    port: int | None = DEFAULT_PORT
    max_body_bytes: int = MAX_BODY_BYTES
    max_elements: int = MAX_ELEMENTS
    max_view_elements: int = MAX_VIEW_ELEMENTS
    solve_workers: int = SOLVE_WORKERS
    formula_seconds: float = FORMULA_SECONDS
    small_workers: int = SMALL_WORKERS
    large_queue: int = LARGE_QUEUE
    small_queue: int = SMALL_QUEUE
    retry_after_s: int = RETRY_AFTER_S
    header_timeout_s: float = HEADER_TIMEOUT_S
    body_timeout_s: float = BODY_TIMEOUT_S
    page_timeout_s: float = PAGE_TIMEOUT_S
    allowed_hosts: tuple[str, ...] = ()
    initial_sample: str | None = None
    #: A Dask scheduler's address for the tolerance study's chunks (None: in-process).
    scheduler: str | None = None
    static_dir: Path = field(default_factory=lambda: _folder("PHASORBENCH_STATIC", _REPO_ROOT / "static"))
    templates_dir: Path = field(
        default_factory=lambda: _folder("PHASORBENCH_TEMPLATES", _REPO_ROOT / "templates"))
    samples_dir: Path = field(default_factory=lambda: _folder("PHASORBENCH_SAMPLES", _REPO_ROOT / "samples"))

    def host_names(self) -> frozenset[str]:
        """Every host name the Host guard accepts, lower-case, IPv6 without brackets."""
        names = set(LOOPBACK_NAMES) | {h.lower().strip("[]") for h in self.allowed_hosts}
        if self.host not in WILDCARD_HOSTS:
            names.add(self.host.lower().strip("[]"))
        return frozenset(names)


#: One line of help per setting, for ``serve --help`` and the README.
SETTINGS_HELP = {
    "host": f"address to listen on (default {DEFAULT_HOST}, loopback only)",
    "port": f"port to listen on (default {DEFAULT_PORT})",
    "max_body_bytes": (f"largest request body accepted, in MB (default {BODY_BYTES_PER_ELEMENT} "
                       f"bytes per element of --max-elements, at least {MIN_BODY_BYTES // 2**20} "
                       f"MB: {MAX_BODY_BYTES / 2**20:.1f} MB); larger gets 413"),
    "max_elements": (f"largest circuit solved, in elements (default {MAX_ELEMENTS:,}); larger "
                     "gets 422; the body limit grows with it"),
    "max_view_elements": f"elements per waveform or phasor request (default {MAX_VIEW_ELEMENTS})",
    "solve_workers": f"worker threads for solving (default {SOLVE_WORKERS})",
    "small_workers": (f"worker threads kept for hand-sized circuits, so they are answered "
                      f"while big ones queue (default {SMALL_WORKERS})"),
    "large_queue": (f"big jobs that may wait for a worker; one more gets 503 with "
                    f"Retry-After (default {LARGE_QUEUE})"),
    "small_queue": f"hand-sized jobs that may wait (default {SMALL_QUEUE})",
    "formula_seconds": (f"seconds one formula's symbolic work may take before it is "
                        f"stopped (default {FORMULA_SECONDS:g})"),
    "page_timeout_s": (f"seconds the page waits for an answer before it says the server "
                       f"is not answering (default {PAGE_TIMEOUT_S:g})"),
    "scheduler": "address of a Dask scheduler that runs the tolerance studies' chunks "
                 "(the 'cluster' extra; default: none, in-process)",
}
