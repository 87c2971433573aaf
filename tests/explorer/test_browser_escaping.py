"""Hostile scenario text in real headless Chromium: the app and the review file run none of it.

The title, description and notes of the scenario (and a proposal's title in the review file)
hold the strings of tests/explorer/hostile.py (OWASP XSS Filter Evasion Cheat Sheet cases).
Each would set a sentinel global if it ran; none may, no dialog may open, no link may point
out of the page, and the title must read exactly as typed.
"""

from __future__ import annotations

import pytest

from tests.explorer.helpers import offline, open_scenario_form, served_app
from tests.explorer.hostile import HOSTILE, SENTINELS
from tests.explorer.test_escaping import NOTES, TITLE, hostile_scenario, write_hostile_review

pytestmark = pytest.mark.usefixtures("chromium_path")

#: JavaScript: every element matching `selector`, looking into shadow roots as well (Panel
#: and Bokeh render into them).
DEEP = """(selector) => {
  const out = [];
  const visit = (root) => {
    for (const el of root.querySelectorAll("*")) {
      if (el.matches(selector)) out.push(el);
      if (el.shadowRoot) visit(el.shadowRoot);
    }
  };
  visit(document);
  return out;
}"""

WATCH = """() => {
  window.__violations = [];
  document.addEventListener("securitypolicyviolation",
    (e) => window.__violations.push(e.violatedDirective + " " + e.blockedURI));
}"""


def _watch(page):
    dialogs, errors = [], []
    page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.add_init_script(f"({WATCH})()")
    return dialogs, errors


def _check_inert(page, dialogs):
    for name in SENTINELS:
        assert page.evaluate(f"() => window.{name}") is None, name
    assert dialogs == []
    hrefs = page.evaluate(f"() => ({DEEP})('a[href], area[href]').map(a => a.href)")
    assert all(h.startswith(page.url.split("#")[0] + "#") for h in hrefs), hrefs
    for tag in ("img", "svg foreignObject", "iframe", "object", "embed"):
        found = page.evaluate(f"() => ({DEEP})('{tag}').map(e => e.outerHTML.slice(0, 80))")
        assert all("pwned" not in f for f in found), found


def _heading_text(page, level="h1"):
    return page.evaluate(f"() => ({DEEP})('{level}').map(h => h.innerText)")


def test_app_runs_no_scenario_text_and_shows_it_as_typed(page):
    """Served app: no sentinel set, no dialog, no outside link, the title as typed, and the
    notes field holds the notes as typed."""
    dialogs, errors = _watch(page)
    with served_app(hostile_scenario()) as url:
        page.goto(url)
        page.wait_for_function(f"() => ({DEEP})('h1').length > 0", timeout=60000)
        page.wait_for_function("() => window.Bokeh && Object.keys(Bokeh.index).length > 0",
                               timeout=60000)
        page.wait_for_timeout(1500)
        _check_inert(page, dialogs)
        assert TITLE in _heading_text(page)
        open_scenario_form(page)  # the description stands in the scenario section
        _check_inert(page, dialogs)
        text = page.evaluate(f"() => ({DEEP})('p').map(p => p.innerText).join('\\n')")
        for _, h in HOSTILE:
            assert " ".join(h.split()) in text
        notes = page.evaluate(f"() => ({DEEP})('textarea').map(t => t.value)")
        assert NOTES in notes
    assert errors == []


@pytest.fixture(scope="module")
def hostile_review(tmp_path_factory):
    return write_hostile_review(tmp_path_factory.mktemp("hostile-browser"))


def test_review_file_runs_no_scenario_text_and_its_policy_blocks_nothing_of_its_own(
        page, hostile_review):
    """Review file from file://, network cut: no sentinel, no dialog, no outside link, no
    request, no policy violation (the page's own scripts all run: the maps render), and the
    title, description and notes read as typed."""
    dialogs, errors = _watch(page)
    requests = offline(page)
    page.goto(hostile_review.as_uri())
    page.wait_for_function("() => window.Bokeh && Object.keys(Bokeh.index).length > 0",
                           timeout=30000)
    page.wait_for_timeout(1000)
    _check_inert(page, dialogs)
    assert requests == []
    assert page.evaluate("() => window.__violations") == []
    assert errors == []
    title = f"Review: {TITLE} compared with Proposal {HOSTILE[3][1]}"
    assert _heading_text(page) == [title]
    assert page.title() == title
    body = page.evaluate("() => document.body.innerText")
    for _, h in HOSTILE:
        assert " ".join(h.split()) in body
    assert page.evaluate("() => document.querySelector('div.rw-notes').innerText") == NOTES

