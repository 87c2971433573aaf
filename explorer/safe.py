"""The one boundary where text from users and files meets markup.

Scenario titles, descriptions, review notes, proposal names, upload file names, field values
echoed in messages and key names all come from people the reader of a page or a review file
may never have met. None of it is ever markup: every HTML fragment the explorer builds takes
user text through :func:`html` (a template of our own with each value escaped) or
:func:`text`, and panes that show such text are HTML panes, never Markdown (a Markdown
renderer would turn ``www.`` and ``http://`` text into links and pass raw HTML through).
The project's own fixed Markdown (section headings, captions) stays Markdown.

Downloads that a spreadsheet may open (CSV, JSON) take user text through
:func:`spreadsheet_text`, so that a leading ``=``, ``+``, ``-`` or ``@`` is never run as a
formula.

References
----------
OWASP Cross Site Scripting Prevention Cheat Sheet (rule 1: HTML-encode before inserting
untrusted data into element content); OWASP CSV Injection (prefix cells that begin with
``=``, ``+``, ``-``, ``@``, tab or carriage return with a single quote).
"""

from __future__ import annotations

from markupsafe import Markup, escape

__all__ = ["SafeHTML", "code", "html", "message_html", "paragraphs", "spreadsheet_text",
           "text"]


class SafeHTML(Markup):
    """HTML built by this module: user values in it are escaped, our own tags are not.

    A :class:`markupsafe.Markup` (so fragments nest without being escaped twice) that also
    hands plain text to display libraries: Panel's HTML pane calls ``_repr_html_`` and escapes
    the result only for transport, which the browser undoes.
    """

    __slots__ = ()

    def _repr_html_(self) -> str:
        return str.__str__(self)

#: First characters a spreadsheet reads as the start of a formula (or a DDE call).
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def text(value: object) -> SafeHTML:
    """`value` as HTML text: ``&``, ``<``, ``>``, ``"`` and ``'`` escaped, line breaks kept.

    >>> str(text('<script>alert(1)</script>'))
    '&lt;script&gt;alert(1)&lt;/script&gt;'
    """
    return SafeHTML("<br>").join(escape(line) for line in str(value).split("\n"))


def paragraphs(value: object) -> SafeHTML:
    """Prose as HTML paragraphs: a blank line starts a new paragraph, other line breaks are
    spaces (scenario descriptions are wrapped text); every character is text.

    >>> str(paragraphs("One <b>\\ntwo.\\n\\nThree."))
    '<p>One &lt;b&gt; two.</p><p>Three.</p>'
    """
    blocks = [" ".join(b.split()) for b in str(value).strip().split("\n\n")]
    return SafeHTML("").join(html("<p>{}</p>", b) for b in blocks if b)


def html(template: str, *args: object, **kwargs: object) -> SafeHTML:
    """Fill `template` (our own HTML, with ``{}`` fields) with escaped values.

    Values that are already markup (fragments this module built) go in as they are;
    everything else is escaped.

    >>> str(html("<h1>{}</h1>", 'Unit <img src=x onerror="x()">'))
    '<h1>Unit &lt;img src=x onerror=&#34;x()&#34;&gt;</h1>'
    """
    return SafeHTML(template).format(*args, **kwargs)


def code(value: object) -> SafeHTML:
    """`value` in a code span (quoted user values in messages: never auto-linked)."""
    return html("<code>{}</code>", value)


def message_html(prefix: str, err: object, suffix: str = "") -> SafeHTML:
    """A message about bad input: our `prefix` and `suffix` around the error's text.

    An :class:`thermo.errors.InputError` shows its field and the value as typed in code
    spans; any other error shows its text escaped.
    """
    if hasattr(err, "shown_value"):
        body = html("{} = {} is not allowed: expected {}", code(err.field),
                    code(err.shown_value), err.allowed)
    else:
        body = text(err)
    return html("{}{}{}", prefix, body, suffix)


def spreadsheet_text(value: str) -> str:
    """Text for a CSV or JSON download: a leading formula character gets a ``'`` before it.

    >>> spreadsheet_text("=HYPERLINK(1)"), spreadsheet_text("Unit 7")
    ("'=HYPERLINK(1)", 'Unit 7')
    """
    value = str(value)
    return "'" + value if value.startswith(_FORMULA_START) else value
