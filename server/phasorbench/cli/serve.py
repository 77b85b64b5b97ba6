"""The ``phasorbench serve`` command: run the workbench on this machine.

It binds to loopback unless told otherwise (and warns when told), prints the URL to
open, and can open it in the default browser.
"""

from __future__ import annotations

import argparse
import ipaddress
import sys
import threading

from ..web.settings import (DEFAULT_HOST, DEFAULT_PORT, FORMULA_SECONDS, LARGE_QUEUE,
                            LOOPBACK_NAMES, MAX_ELEMENTS, PAGE_TIMEOUT_S, SETTINGS_HELP,
                            SMALL_QUEUE, SMALL_WORKERS, SOLVE_WORKERS, SWITCH_INTERVAL_S,
                            WILDCARD_HOSTS, Settings, body_limit)

__all__ = ["add_serve_arguments", "add_serve_command", "serve_main", "is_loopback", "page_url"]


#: The numeric settings ``serve`` takes: flag, Settings field, type, default, metavar,
#: and the range a value must fall in (low excluded when 0 is not allowed: see _check).
_LIMITS = (
    ("--max-elements", "max_elements", int, MAX_ELEMENTS, "N", 1, None),
    ("--max-body-mb", "max_body_bytes", float, None, "MB", 0, None),
    ("--workers", "solve_workers", int, SOLVE_WORKERS, "N", 1, None),
    ("--small-workers", "small_workers", int, SMALL_WORKERS, "N", 1, None),
    ("--large-queue", "large_queue", int, LARGE_QUEUE, "N", 0, None),
    ("--small-queue", "small_queue", int, SMALL_QUEUE, "N", 0, None),
    ("--formula-seconds", "formula_seconds", float, FORMULA_SECONDS, "S", 0, 3600),
    ("--page-timeout", "page_timeout_s", float, PAGE_TIMEOUT_S, "S", 0, 3600),
)


def _check(flag: str, kind, value, low, high) -> str | None:
    """Why ``value`` is refused for ``flag``, or None. Floats must be finite and above
    ``low``; integers at least ``low``; both at most ``high`` when given."""
    import math
    if kind is float:
        ok = math.isfinite(value) and value > low
        need = f"a number greater than {low}"
    else:
        ok = value >= low
        need = "0 or more" if low == 0 else f"at least {low}"
    if ok and high is not None and value > high:
        ok, need = False, f"at most {high}"
    return None if ok else f"phasorbench serve: {flag} must be {need}, not {value:g}"


def add_serve_arguments(parser: argparse.ArgumentParser) -> None:
    """The options of ``serve``: ``--host``, ``--port``, ``--open``, ``--sample``, limits."""
    parser.add_argument("--host", default=DEFAULT_HOST, help=SETTINGS_HELP["host"])
    parser.add_argument("--port", type=int, default=DEFAULT_PORT, help=SETTINGS_HELP["port"])
    parser.add_argument("--open", action="store_true", help="open the page in the default browser")
    parser.add_argument("--sample", metavar="NAME", default=None,
                        help="sample (a file name in samples/, without .circuit) the page "
                             "loads when the browser has no saved circuit; default: the first")
    for flag, setting, kind, default, metavar, _low, _high in _LIMITS:
        parser.add_argument(flag, dest=setting, type=kind, default=default, metavar=metavar,
                            help=SETTINGS_HELP[setting])
    parser.add_argument("--scheduler", metavar="ADDRESS", default=None,
                        help=SETTINGS_HELP["scheduler"])
    parser.add_argument("--allow-host", action="append", default=[], metavar="NAME",
                        help="also accept this name in the Host header (when serving beyond "
                             "loopback); may be repeated")


def add_serve_command(commands) -> None:
    """Register ``serve`` on the command line's sub-command set."""
    serve = commands.add_parser("serve", help="run the workbench page and JSON API on this machine")
    add_serve_arguments(serve)
    serve.set_defaults(run=serve_main)


def is_loopback(host: str) -> bool:
    """Whether ``host`` reaches this machine only (127.0.0.0/8, ::1, localhost)."""
    if host.lower() in LOOPBACK_NAMES:
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False


def page_url(host: str, port: int) -> str:
    """The address to open: wildcard binds are shown as 127.0.0.1, IPv6 in brackets."""
    shown = "127.0.0.1" if host in ("0.0.0.0", "") else "[::1]" if host == "::" else host
    if ":" in shown and not shown.startswith("["):
        shown = f"[{shown}]"
    return f"http://{shown}:{port}/"


def _open_browser(url: str) -> bool:
    """Whether a browser was started for ``url`` (False with no display or browser)."""
    import webbrowser
    try:
        return bool(webbrowser.open(url))
    except webbrowser.Error:
        return False


def serve_main(args) -> int:
    """Run the server until interrupted; returns the exit status."""
    import uvicorn

    from ..web.app import create_app

    if not 0 < args.port < 65536:
        print(f"phasorbench serve: --port must be between 1 and 65535, not {args.port}",
              file=sys.stderr)
        return 2
    sample = getattr(args, "sample", None)
    limits = {}
    for flag, setting, kind, default, _metavar, low, high in _LIMITS:
        value = getattr(args, setting, default)
        refused = None if value is None else _check(flag, kind, value, low, high)
        if refused:
            print(refused, file=sys.stderr)
            return 2
        limits[setting] = value
    body_mb = limits.pop("max_body_bytes")
    limits["max_body_bytes"] = (int(body_mb * 2**20) if body_mb is not None
                                else body_limit(limits["max_elements"]))
    settings = Settings(host=args.host, port=args.port, initial_sample=sample, **limits,
                        allowed_hosts=tuple(getattr(args, "allow_host", []) or ()),
                        scheduler=getattr(args, "scheduler", None))
    if sample and not (settings.samples_dir / f"{sample}.circuit").is_file():
        names = sorted(p.stem for p in settings.samples_dir.glob("*.circuit"))
        print(f"phasorbench serve: no sample named '{sample}' in {settings.samples_dir}; "
              "the samples are: " + (", ".join(names) or "none"), file=sys.stderr)
        return 2
    if not is_loopback(args.host):
        reach = ("127.0.0.1 or a name given with --allow-host" if args.host in WILDCARD_HOSTS
                 else f"{args.host} or a name given with --allow-host")
        print(f"phasorbench serve: warning: listening on {args.host}, not loopback: other "
              "machines on the network can reach this server. It has no login; use it "
              f"only on a network you trust. Requests must address it as {reach}.",
              file=sys.stderr)
    try:
        app = create_app(settings)
    except RuntimeError as exc:
        print(f"phasorbench serve: {exc}", file=sys.stderr)
        return 2
    url = page_url(args.host, args.port)
    from ..web.serving import timed_protocol
    config = uvicorn.Config(app, host=args.host, port=args.port, log_level="warning",
                            access_log=False, http=timed_protocol(settings))
    sys.setswitchinterval(SWITCH_INTERVAL_S)      # the reason is beside the setting
    server = uvicorn.Server(config)

    def announce():
        # Print the URL once the socket listens, so a script waiting for it can connect.
        while not server.started and not server.should_exit:
            threading.Event().wait(0.05)
        if server.started:
            print(f"phasorbench: workbench at {url}  (Ctrl+C stops it)", flush=True)
            if getattr(args, "open", False) and not _open_browser(url):
                print(f"phasorbench serve: no browser could be opened on this machine "
                      f"(no display?); open {url} yourself", file=sys.stderr, flush=True)

    announcer = threading.Thread(target=announce, daemon=True)
    announcer.start()
    try:
        server.run()
    except KeyboardInterrupt:
        pass
    except SystemExit:      # uvicorn exits this way when it cannot bind
        pass
    server.should_exit = True
    announcer.join(timeout=1)
    if not server.started:
        print(f"phasorbench serve: could not listen on {args.host}:{args.port} "
              "(is the port in use? try --port)", file=sys.stderr)
        return 1
    return 0
