"""`explorer serve`: loopback by default, a warning for anything else, bad options refused,
the session bound and idle time passed to the server."""

from __future__ import annotations

import pytest

from explorer.cli import build_parser, main


@pytest.fixture
def served(monkeypatch):
    """Record explorer.server.serve's arguments instead of starting a server."""
    pytest.importorskip("panel")
    from explorer import server

    calls = []
    monkeypatch.setattr(server, "serve", lambda *a, **k: calls.append((a, k)))
    return calls


def test_default_address_is_loopback(served, capsys):
    """serve binds 127.0.0.1 by default on the port given, opens no browser, allows only loopback
    websocket origins, and warns of nothing."""
    assert build_parser().parse_args(["serve"]).address == "127.0.0.1"
    assert main(["serve", "--port", "5123"]) == 0
    (_, kwargs), = served
    assert kwargs["address"] == "127.0.0.1" and kwargs["port"] == 5123
    assert kwargs["max_sessions"] == 16 and kwargs["idle_minutes"] == 30
    assert set(kwargs["websocket_origin"]) == {"127.0.0.1:5123", "localhost:5123"}
    assert "warning" not in capsys.readouterr().err


def test_other_address_is_served_only_with_a_warning(served, capsys):
    """serve --address 0.0.0.0 warns naming the address and allows that origin only."""
    assert main(["serve", "--address", "0.0.0.0", "--port", "5124"]) == 0
    err = capsys.readouterr().err
    assert "warning" in err and "0.0.0.0" in err
    (_, kwargs), = served
    assert kwargs["websocket_origin"] == ["0.0.0.0:5124"]


@pytest.mark.parametrize(("argv", "named"), [
    (["--address", "my-laptop"], "--address"),
    (["--port", "70000"], "--port"),
    (["missing.toml"], "missing.toml"),
    (["--max-sessions", "0"], "--max-sessions"),
    (["--max-sessions", "many"], "--max-sessions"),
    (["--idle-minutes", "0.5"], "--idle-minutes"),
])
def test_bad_serve_options_are_one_line_and_exit_2(served, capsys, argv, named):
    """Each bad serve option exits 2 with one stderr line naming it, no traceback, and nothing
    served."""
    assert main(["serve", *argv]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and named in err and "Traceback" not in err
    assert served == []


def test_session_bound_and_idle_time_reach_the_server(served):
    assert main(["serve", "--max-sessions", "3", "--idle-minutes", "5"]) == 0
    (_, kwargs), = served
    assert kwargs["max_sessions"] == 3 and kwargs["idle_minutes"] == 5.0
