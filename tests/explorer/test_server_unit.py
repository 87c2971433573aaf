"""explorer.server without a browser: the session book, the busy page, and GETs of clients
that have gone (loopback only, bounded in count and time)."""

from __future__ import annotations

import socket
import threading
import time
import urllib.request

import pytest

from explorer.server import BUSY_TITLE, SessionBook, busy_page
from tests.explorer.helpers import served_app, small_scenario


def test_the_book_bounds_live_pages_and_releases_idle_ones():
    book = SessionBook(max_sessions=2, idle_minutes=1.0)
    released = []
    assert book.open("a", lambda: released.append("a"))
    assert book.open("b", lambda: released.append("b"))
    assert book.full() and not book.open("c", lambda: None)
    assert book.busy == 1 and book.built == 2
    now = time.monotonic()
    book.touch("b")
    # 45 s on, neither page has been idle for its minute. "b" changes 30 s on; at 61 s only
    # "a" has gone a minute without a change.
    assert book.idle(now + 45.0) == []
    book._live["b"].last = now + 30.0
    (sid, release), = book.idle(now + 61.0)
    assert sid == "a"
    release()
    assert released == ["a"] and book.live() == 1 and not book.full()
    assert book.idle(now + 61.0) == []  # released once only
    assert book.open("c", lambda: None)  # its slot is free again
    for sid in "abc":
        book.close(sid)
    assert book.live() == 0


def test_busy_page_is_short_escaped_text():
    page = busy_page(16)
    assert BUSY_TITLE in page and "16" in page
    assert "<script" not in page and len(page) < 1000


def test_gets_of_clients_that_have_gone_build_nothing():
    pytest.importorskip("panel")
    with served_app(small_scenario()) as url:
        server = served_app.last
        port = int(url.rsplit(":", 1)[1].strip("/"))
        # The server is busy for a second; 20 clients ask for the page and hang up at once.
        server.server.io_loop.add_callback(time.sleep, 1.0)

        def gone():
            with socket.create_connection(("127.0.0.1", port), timeout=5) as s:
                s.sendall(f"GET / HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\n\r\n".encode())

        threads = [threading.Thread(target=gone) for _ in range(20)]
        for t in threads:
            t.start()
        for t in threads:
            t.join(timeout=5)
        # A client that stays gets its page's shell.
        with urllib.request.urlopen(url, timeout=30) as answer:
            assert answer.status == 200
        assert server.book.gone >= 10
        assert len(server.server.get_sessions("/")) <= 20 - server.book.gone + 1
        assert server.book.built == 0  # no browser connected: no explorer page built
