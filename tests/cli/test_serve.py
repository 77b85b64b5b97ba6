"""The ``serve`` command's own decisions: loopback or not, the URL it prints, bad options."""

from __future__ import annotations

import argparse

import pytest

from phasorbench.cli import serve


def parse(*argv):
    parser = argparse.ArgumentParser()
    serve.add_serve_arguments(parser)
    return parser.parse_args(list(argv))


@pytest.mark.parametrize("host, loopback", [
    # RFC 1122, section 3.2.1.3 (127/8 is loopback) and RFC 4291, section 2.5.3 (::1).
    ("127.0.0.1", True), ("127.5.0.1", True), ("localhost", True), ("::1", True),
    ("0.0.0.0", False), ("::", False), ("192.168.1.10", False), ("bench.example", False),
])
def test_is_loopback(host, loopback):
    assert serve.is_loopback(host) is loopback


def test_page_url_is_openable():
    # A wildcard bind is reached locally at 127.0.0.1; IPv6 literals need brackets
    # in a URL (RFC 3986, section 3.2.2).
    assert serve.page_url("127.0.0.1", 8000) == "http://127.0.0.1:8000/"
    assert serve.page_url("0.0.0.0", 8123) == "http://127.0.0.1:8123/"
    assert serve.page_url("::1", 8000) == "http://[::1]:8000/"


def test_defaults_are_loopback_and_8000():
    args = parse()
    assert (args.host, args.port, args.open, args.sample) == ("127.0.0.1", 8000, False, None)


def test_unknown_sample_is_refused(capsys):
    assert serve.serve_main(parse("--sample", "no-such-sample", "--port", "8123")) == 2
    err = capsys.readouterr().err
    assert "no-such-sample" in err
    # common practice, no source: a refusal lists what would have been accepted
    from pathlib import Path
    samples = sorted(p.stem for p in (Path(__file__).parents[2] / "samples").glob("*.circuit"))
    assert samples and all(name in err for name in samples)


def test_open_without_a_browser_says_so(monkeypatch):
    # Python's webbrowser module: open() returns False when no browser can be started
    import webbrowser
    monkeypatch.setattr(webbrowser, "open", lambda url: False)
    assert serve._open_browser("http://127.0.0.1:8000/") is False
    monkeypatch.setattr(webbrowser, "open", lambda url: True)
    assert serve._open_browser("http://127.0.0.1:8000/") is True


def test_bad_port_is_refused(capsys):
    assert serve.serve_main(parse("--port", "0")) == 2
    assert "--port" in capsys.readouterr().err


def test_non_loopback_host_warns(monkeypatch, capsys):
    import uvicorn

    def fake_run(self, sockets=None):      # no socket is opened: only the warning is tested
        self.started = True
    monkeypatch.setattr(uvicorn.Server, "run", fake_run)
    assert serve.serve_main(parse("--host", "0.0.0.0", "--port", "8123")) == 0
    assert "warning" in capsys.readouterr().err


def _settings_of(monkeypatch, *argv):
    """The Settings ``serve`` would run with (the app is built, no socket is opened)."""
    import uvicorn

    from phasorbench.web import app as web_app
    seen = {}
    real = web_app.create_app

    def capture(settings):
        seen["settings"] = settings
        return real(settings)
    monkeypatch.setattr(web_app, "create_app", capture)
    monkeypatch.setattr(uvicorn.Server, "run", lambda self, sockets=None: setattr(self, "started", True))
    assert serve.serve_main(parse("--port", "8123", *argv)) == 0
    return seen["settings"]


def test_limits_are_serve_flags(monkeypatch):
    # A 300×300 benchmark mesh: 270,000 elements in 12.2 MB (benchmarks/mesh.py); one
    # flag lets it through: the body limit grows with the element limit.
    one = _settings_of(monkeypatch, "--max-elements", "300000")
    assert one.max_elements == 300_000 and one.max_body_bytes >= 12.2e6
    both = _settings_of(monkeypatch, "--max-body-mb", "64", "--workers", "2")
    assert both.max_body_bytes == 64 * 2 ** 20 and both.solve_workers == 2


def test_queue_and_time_settings_are_serve_flags(monkeypatch):
    # common practice, no source: every limit a refusal names can be set where the server
    # is started (the 503's Retry-After, the formula's time limit, the page's wait)
    s = _settings_of(monkeypatch, "--small-workers", "3", "--large-queue", "0",
                     "--small-queue", "8", "--formula-seconds", "2.5", "--page-timeout", "90")
    assert (s.small_workers, s.large_queue, s.small_queue) == (3, 0, 8)
    assert (s.formula_seconds, s.page_timeout_s) == (2.5, 90.0)


@pytest.mark.parametrize("flag", ["--max-elements", "--max-body-mb", "--workers",
                                  "--small-workers", "--formula-seconds", "--page-timeout"])
def test_limits_must_be_positive(flag, capsys):
    assert serve.serve_main(parse(flag, "0", "--port", "8123")) == 2
    assert flag in capsys.readouterr().err


@pytest.mark.parametrize("flag, value", [("--large-queue", "-1"), ("--small-queue", "-3"),
                                         ("--formula-seconds", "nan"),
                                         ("--page-timeout", "7200")])
def test_queues_and_times_out_of_range_are_refused(flag, value, capsys):
    assert serve.serve_main(parse(flag, value, "--port", "8123")) == 2
    assert flag in capsys.readouterr().err
