"""Text from scenario files and users is text, never markup (no browser needed).

Hostile strings (tests/explorer/hostile.py, after the OWASP XSS Filter Evasion Cheat Sheet)
go into the title, the description, the notes, a proposal's title and the form's fields; each
place that shows them must hold them escaped, with no element or attribute they could have
made, and a spreadsheet must read a leading ``=`` as text (OWASP, CSV Injection).
"""

from __future__ import annotations

import base64
import csv
import hashlib
import io
import json
import re
import subprocess
import sys

import pytest
from markupsafe import escape

import thermo
from explorer.safe import code, html, message_html, paragraphs, spreadsheet_text, text
from explorer.tables import balance_csv
from tests.explorer.helpers import small_scenario
from tests.explorer.hostile import HOSTILE, assert_inert, hostile_scenario_text, parse

TITLE = "Unit 7 " + " ".join(s for _, s in HOSTILE[:5])
DESCRIPTION = "\n\n".join(s for _, s in HOSTILE)
NOTES = HOSTILE[-1][1] + "\n" + " ".join(s for _, s in HOSTILE[:-1])


def hostile_scenario(title=TITLE):
    sc = small_scenario()
    return thermo.scenario.parse_scenario(hostile_scenario_text(sc.to_toml(), title,
                                                                DESCRIPTION, NOTES))


@pytest.mark.parametrize("name,s", HOSTILE, ids=[n for n, _ in HOSTILE])
def test_every_escaping_function_leaves_no_markup(name, s):
    """text, html, code, paragraphs and message_html give markup with no element or
    attribute from the string, and the string comes back unchanged when unescaped."""
    for out in (text(s), html("<p>{}</p>", s), code(s), paragraphs(s),
                message_html("Not applied: ", thermo.errors.InputError(s, s, "a number"))):
        assert_inert(str(out))
        assert "<script" not in str(out).lower()
    assert str(html("<p>{}</p>", s)) == f"<p>{escape(s)}</p>"


def test_error_fields_and_values_stand_in_code_spans():
    """A key path such as window.temperature.to is quoted in a code span (never auto-linked),
    and so is the value as typed."""
    err = thermo.errors.InputError("window.temperature.to", "www.evil.example", "a temperature")
    out = str(message_html("Not applied: ", err))
    assert "<code>window.temperature.to</code>" in out
    assert "<code>&#39;www.evil.example&#39;</code>" in out


def test_spreadsheet_text_neutralises_formula_starts():
    """OWASP CSV Injection: cells starting with = + - @ tab or CR get a leading quote; other
    text is unchanged."""
    for s in ("=1+1", "+1", "-1", "@SUM(A1)", "\t=1", "\r=1"):
        assert spreadsheet_text(s) == "'" + s
    for s in ("Unit 7", "1-2", "", "a=b"):
        assert spreadsheet_text(s) == s


@pytest.fixture(scope="module")
def app():
    pytest.importorskip("panel")
    from explorer.app import build_app

    page = build_app(hostile_scenario(), solve="now")
    return page, page.explorer_state


def test_app_title_and_description_are_text(app):
    """The page's title and description panes hold the escaped text as typed."""
    page, s = app
    title = str(page[0].object)
    desc = str(page.explorer_parts["description"].object)
    assert title == f"<h1>{escape(TITLE)}</h1>"
    assert_inert(title)
    assert_inert(desc)
    for _, h in HOSTILE:
        assert str(escape(" ".join(h.split()))) in desc


def test_app_messages_quote_hostile_field_text(app):
    """A hostile value typed in a field comes back in its message, escaped, and in the
    general message, with the field name in a code span."""
    from explorer.app import ScenarioForm

    page, s = app
    form = ScenarioForm(s)
    bad = HOSTILE[1][1]
    form.inputs["temperature"].value = bad
    assert form.submit() is False
    for pane in (form.messages["temperature"], form.general):
        out = str(pane.object)
        assert out, "no message shown"
        assert_inert(out)
        assert str(escape(repr(bad))) in out
    assert "<code>design_point.temperature</code>" in str(form.general.object)


def test_app_proposal_title_in_the_status_is_text(app):
    """A proposal's title shows in the comparison status as text."""
    from explorer.app import ComparisonView

    page, s = app
    view = ComparisonView(s)
    prop = hostile_scenario(title="Proposal " + HOSTILE[2][1])
    view._adopt(prop)
    view._status()
    out = str(view.status.object)
    assert "Proposal" in out
    assert_inert(out)
    s.set_proposal(None, background=False)


def test_app_downloads_write_user_text_a_spreadsheet_does_not_run(app):
    """The CSV and JSON downloads carry the title and the notes; a leading '=' is written
    with a quote before it (OWASP, CSV Injection)."""
    from explorer.app import BalanceView

    page, s = app
    s.notes = NOTES
    view = BalanceView(s)
    assert view._current is not None
    rows = list(csv.reader(io.StringIO(view._csv().getvalue())))
    notes_row = next(r for r in rows if r[:2] == ["scenario", "review notes"])
    assert notes_row[2] == "'" + NOTES
    d = json.loads(view._json().getvalue())
    assert d["scenario"]["review_notes"] == "'" + NOTES
    assert balance_csv(view._current, title="=cmd").splitlines()[1] == "scenario,title,'=cmd,"


def write_hostile_review(folder):
    """A comparison review file of a hostile base and a hostile proposal, written as the app
    writes it (a fresh process); returns its path."""
    base = hostile_scenario()
    prop = hostile_scenario(title="Proposal " + HOSTILE[3][1])
    (folder / "s.toml").write_text(base.to_toml(), "utf-8")
    (folder / "p.toml").write_text(prop.to_toml(), "utf-8")
    out = folder / "review.html"
    proc = subprocess.run([sys.executable, "-m", "explorer.export", "--scenario",
                           str(folder / "s.toml"), "--compare", str(folder / "p.toml"),
                           "-o", str(out)], capture_output=True, text=True, timeout=600)
    assert proc.returncode == 0, proc.stderr
    return out


@pytest.fixture(scope="module")
def review_file(tmp_path_factory):
    return write_hostile_review(tmp_path_factory.mktemp("hostile-review")).read_text("utf-8")


def test_review_file_holds_no_markup_from_the_scenarios(review_file):
    """No element or attribute a hostile string could make; the only scripts are the page's
    own (the library's code, its document, our data block)."""
    m = parse(review_file)
    executable = [a for a, _ in m.scripts if a.get("type", "text/javascript")
                  in ("text/javascript", "module")]
    data = [a for a, _ in m.scripts if a.get("type") == "application/json"]
    assert len(executable) + len(data) == len(m.scripts)
    assert_inert(review_file, allowed_scripts=len(m.scripts))
    assert all("src" not in a for a, _ in m.scripts)
    # The text as typed, escaped, in the heading.
    assert f"<h1>Review: {escape(TITLE)} compared with Proposal {escape(HOSTILE[3][1])}</h1>" \
        in review_file


def test_review_file_data_block_cannot_end_itself(review_file):
    """The embedded data hold no '<' at all (written as \\u003c), so no text inside can close
    the block or open a comment; the data still parse."""
    m = re.search(r'<script type="application/json" id="rw-data">(.*?)</script>', review_file,
                  flags=re.S)
    assert m and "<" not in m.group(1)
    assert json.loads(m.group(1))["species"][0] == "CH4"


def test_review_file_policy_allows_only_its_own_scripts(review_file):
    """The Content-Security-Policy meta comes first in the head, lists the SHA-256 of every
    executable inline script, and grants no 'unsafe-inline' for scripts and no network."""
    head = review_file[:review_file.index("<title>")]
    m = re.search(r'<meta http-equiv="Content-Security-Policy" content="([^"]+)">', head)
    assert m, "no policy before the title"
    policy = dict((d.strip().split(" ", 1) + [""])[:2] for d in m.group(1).split(";"))
    assert policy["default-src"] == "'none'"
    assert policy["connect-src"] == "'none'"
    assert "'unsafe-inline'" not in policy["script-src"]
    hashes = set(re.findall(r"'sha256-([^']+)'", policy["script-src"]))
    for attrs, body in parse(review_file).scripts:
        if attrs.get("type", "text/javascript") == "text/javascript":
            digest = base64.b64encode(hashlib.sha256(body.encode("utf-8")).digest()).decode()
            assert digest in hashes
