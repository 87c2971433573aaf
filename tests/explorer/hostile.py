"""Hostile strings for the escaping tests, and checks that a page treats them as text.

The cases follow the OWASP XSS Filter Evasion Cheat Sheet (script tags, event-handler
attributes on img and svg, ``javascript:`` URLs, closing tags inside the text, entities) plus
what a Markdown renderer would turn into links (Markdown links, bare ``www.`` and ``http://``
text). Each sets a sentinel global if it ever runs as script.
"""

from __future__ import annotations

import json
import re
from html.parser import HTMLParser

#: (name, text); the sentinel of case k is ``window.__pwned_k``.
HOSTILE = [
    ("script", "<script>window.__pwned_0=1</script>"),
    ("img onerror", '<img src=x onerror="window.__pwned_1=1">'),
    ("svg onload", "<svg/onload=window.__pwned_2=1>"),
    ("closing h1 and script", "</h1></script><script>window.__pwned_3=1</script>"),
    ("javascript url", '<a href="javascript:window.__pwned_4=1">go</a> javascript:alert(4)'),
    ("markdown link", "[docs](http://evil.example/5) and [x](javascript:window.__pwned_5=1)"),
    ("bare links", "see www.evil.example and http://evil.example/6"),
    ("entities", "&lt;script&gt;window.__pwned_7=1&lt;/script&gt; &amp; &#60;b&#62;"),
    ("attribute break", "\" onmouseover=\"window.__pwned_8=1\" x=\""),
    ("formula", "=HYPERLINK(\"http://evil.example/9\",\"x\")"),
]

#: Sentinels a test can read in the page.
SENTINELS = [f"__pwned_{k}" for k in range(len(HOSTILE))]


def hostile_scenario_text(base_toml: str, title: str, description: str, notes: str) -> str:
    """A scenario file's text with its title, description and notes replaced (TOML strings
    written with JSON escapes, which TOML basic strings share)."""
    def put(pattern, key, value, text, flags=re.M):
        line = f"{key} = {json.dumps(value)}"
        return re.sub(pattern, lambda _: line, text, count=1, flags=flags)

    text = put(r"^title = .*$", "title", title, base_toml)
    text = put(r'^description = """.*?"""', "description", description, text, re.M | re.S)
    return put(r"^notes = .*$", "notes", notes, text)


class Markup(HTMLParser):
    """Every tag and attribute of an HTML text, and the text of its scripts."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict]] = []
        self.scripts: list[tuple[dict, str]] = []
        self._in_script: dict | None = None

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        self.tags.append((tag, a))
        if tag == "script":
            self._in_script = a
            self.scripts.append((a, ""))

    def handle_data(self, data):
        if self._in_script is not None:
            a, body = self.scripts[-1]
            self.scripts[-1] = (a, body + data)

    def handle_endtag(self, tag):
        if tag == "script":
            self._in_script = None


def parse(html_text: str) -> Markup:
    m = Markup()
    m.feed(html_text)
    m.close()
    return m


def assert_inert(html_text: str, allowed_scripts: int | None = None) -> None:
    """No element a hostile string could have made: no img, svg, iframe, object, a link or
    form, no event-handler attribute, no ``javascript:`` URL, and (if given) exactly
    `allowed_scripts` script elements."""
    m = parse(html_text)
    for tag, attrs in m.tags:
        assert tag not in ("img", "svg", "iframe", "object", "embed", "a", "form"), (tag, attrs)
        for k, v in attrs.items():
            assert not k.lower().startswith("on"), (tag, k, v)
            assert not (v or "").strip().lower().startswith("javascript:"), (tag, k, v)
    if allowed_scripts is not None:
        assert len(m.scripts) == allowed_scripts, [a for a, _ in m.scripts]
