"""The server under ordinary abuse: abandoned page loads, a full house, pages left idle.

Loopback only, bounded in count (50 abandoned requests, at most 3 pages) and in time (every
wait has a deadline). The deadlines are the issue's requirements (maps within 5 s after the
abandoned burst, or within twice the time of a page loaded just before it when the machine is
so loaded that one page alone takes longer; the busy page within 1 s), not speed
measurements: those are in tests/benchmarks/bench_browser.py.
"""

from __future__ import annotations

import socket
import threading
import time
import urllib.error
import urllib.request

import pytest

from explorer.server import BUSY_TITLE
from explorer.state import SHARED_CACHE
from tests.explorer.helpers import FIND_PIXEL, served_app, small_scenario

pytestmark = pytest.mark.usefixtures("chromium_path")

ABANDONED = 50
ABANDON_AFTER_S = 0.5
MAPS_WITHIN_MS = 5000
BUSY_WITHIN_S = 1.0


def _maps_shown(page, url, timeout_ms):
    page.goto(url, timeout=timeout_ms)
    page.wait_for_function(f"() => ({FIND_PIXEL})(['map-0', 850, 20]) !== null",
                           timeout=timeout_ms)
    page.get_by_text("points solved").first.wait_for(timeout=timeout_ms)


def _abandoned_get(port: int) -> None:
    """Send a page request and hang up after ABANDON_AFTER_S, answer or not."""
    with socket.create_connection(("127.0.0.1", port), timeout=ABANDON_AFTER_S) as s:
        s.sendall(f"GET / HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\n\r\n".encode())
        try:
            s.recv(1)
        except TimeoutError:
            pass


@pytest.fixture
def solved():
    """The small window in the shared cache already (as `explorer serve` does at start)."""
    sc = small_scenario()
    SHARED_CACHE.get(sc)
    return sc


def test_abandoned_page_loads_build_nothing_and_a_real_one_shows_maps(browser, solved):
    with served_app(solved) as url:
        server = served_app.last
        port = int(url.rsplit(":", 1)[1].strip("/"))
        # A page loaded before the burst, as the reference of this run: on a machine loaded
        # by other work one page alone can take longer than 5 s; the burst may not slow the
        # next page to more than twice that.
        before = browser.new_page()
        t0 = time.monotonic()
        _maps_shown(before, url, 60000)
        deadline_ms = max(MAPS_WITHIN_MS, 2000 * (time.monotonic() - t0))
        before.close()
        # The server is held busy for a second (as by a long page build) while the 50
        # requests arrive and are given up; a client that retries with a short timeout.
        server.server.io_loop.add_callback(time.sleep, 1.0)
        threads = [threading.Thread(target=_abandoned_get, args=(port,))
                   for _ in range(ABANDONED)]
        for t in threads:
            t.start()
        for t in threads:
            t.join(timeout=5)
        assert not any(t.is_alive() for t in threads)
        page = browser.new_page()
        errors = []
        page.on("pageerror", lambda e: errors.append(str(e)))
        _maps_shown(page, url, deadline_ms)
        book = server.book
        # Only the real pages were built; the abandoned GETs built no page at all (most were
        # not even given a shell: the client had hung up before the server got to them).
        assert book.built == 2
        assert book.gone >= ABANDONED // 2
        assert errors == []
        page.close()


def test_past_the_bound_a_short_busy_page_answers(browser, solved):
    with served_app(solved, max_sessions=1) as url:
        first = browser.new_page()
        _maps_shown(first, url, 30000)
        t0 = time.monotonic()
        with pytest.raises(urllib.error.HTTPError) as answer:
            urllib.request.urlopen(url, timeout=BUSY_WITHIN_S)
        assert time.monotonic() - t0 < BUSY_WITHIN_S
        assert answer.value.code == 503
        body = answer.value.read().decode()
        assert BUSY_TITLE in body and "<script" not in body
        second = browser.new_page()
        second.goto(url)
        assert second.get_by_role("heading", name=BUSY_TITLE).is_visible()
        assert served_app.last.book.built == 1
        first.close()
        second.close()


def test_an_idle_page_is_released_and_frees_its_slot(browser, solved):
    # 0.05 min = 3 s without any change on the page; the server looks every second.
    with served_app(solved, max_sessions=1, idle_minutes=0.05) as url:
        page = browser.new_page()
        _maps_shown(page, url, 30000)
        page.get_by_text("released after").wait_for(timeout=15000)
        assert page.locator("canvas").count() == 0
        book = served_app.last.book
        assert book.released == 1 and book.live() == 0
        # Its slot is free: a new page is built, not refused.
        other = browser.new_page()
        _maps_shown(other, url, 30000)
        assert book.built == 2 and book.busy == 0
        page.close()
        other.close()
