"""The one exception type for bad user input."""

from __future__ import annotations


class InputError(ValueError):
    """Bad input from a user: names the field, the value and what is allowed.

    Parameters
    ----------
    field : str
        Key path or option name, e.g. ``"feed.composition.CH4"`` or ``"--pressure"``.
    value : object
        What the user gave (shown with ``repr`` for strings).
    allowed : str
        What would be accepted, in words.

    Examples
    --------
    >>> str(InputError("window.pressure.from", "-5 bar", "an absolute pressure above 0"))
    "window.pressure.from = '-5 bar' is not allowed: expected an absolute pressure above 0"
    """

    #: Longest rendering of the value in a message [characters]; longer ones are cut.
    MAX_VALUE_CHARS = 200

    def __init__(self, field: str, value: object, allowed: str):
        self.field = field
        self.value = value
        self.allowed = allowed
        super().__init__(f"{field} = {self.shown_value} is not allowed: expected {allowed}")

    @property
    def shown_value(self) -> str:
        """The value as the message quotes it: its ``repr``, cut at MAX_VALUE_CHARS."""
        shown = repr(self.value)
        if len(shown) > self.MAX_VALUE_CHARS:
            shown = shown[: self.MAX_VALUE_CHARS - 20] + f"... ({len(shown):,} characters)"
        return shown


class InputErrors(InputError):
    """Several bad inputs at once: every invalid field of a scenario or a form.

    The first error's ``field``, ``value`` and ``allowed`` are this one's, so a handler of
    :class:`InputError` keeps working; :attr:`errors` holds them all, in file order, and the
    message is one line per field.

    Parameters
    ----------
    errors : list of InputError
        At least one.
    """

    def __init__(self, errors: list[InputError]):
        if not errors:
            raise ValueError("InputErrors needs at least one error")
        self.errors = list(errors)
        first = self.errors[0]
        self.field, self.value, self.allowed = first.field, first.value, first.allowed
        ValueError.__init__(self, "\n".join(str(e) for e in self.errors))


def all_errors(err: InputError) -> list[InputError]:
    """Every error `err` carries (itself when it is a single one)."""
    return list(err.errors) if isinstance(err, InputErrors) else [err]
