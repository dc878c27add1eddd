"""Errors of our own, each carrying the place in the netlist it refers to.

Every problem a user can cause ends up as a :class:`NetlistError` (or a
subclass).  Its :meth:`NetlistError.render` gives the message the command
line prints: ``file:line:column: what is wrong``, the offending line, a caret
under the spot, and a hint saying what to do.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any


@dataclass(frozen=True)
class Location:
    """A place in a netlist: 1-based line and column, and the span's width.

    Examples
    --------
    >>> Location("a.lumped", 3, 5, 2).describe()
    'a.lumped:3:5'
    """

    source: str
    line: int
    column: int
    width: int = 1

    def describe(self) -> str:
        """Return ``source:line:column``."""
        return f"{self.source}:{self.line}:{self.column}"


class LumpedError(Exception):
    """Base class of every error the tool raises on purpose."""


class NetlistError(LumpedError):
    """A problem in the user's netlist, tied to a place in it.

    Parameters
    ----------
    message : str
        What is wrong, in one sentence.
    location : Location or None
        Where it is.  ``None`` for problems of the whole file.
    hint : str
        What to do about it.
    line_text : str
        The text of the offending line (filled in by the loader when empty).

    Examples
    --------
    >>> err = NetlistError("unknown unit 'uFF'", Location("f.lumped", 2, 20, 3),
    ...                    hint="write a unit such as uF",
    ...                    line_text="capacitor C1 from a to ground 4.7 uFF")
    >>> print(err.render())  # doctest: +NORMALIZE_WHITESPACE
    f.lumped:2:20: unknown unit 'uFF'
        capacitor C1 from a to ground 4.7 uFF
                                          ^^^
    hint: write a unit such as uF
    """

    def __init__(
        self,
        message: str,
        location: Location | None = None,
        *,
        hint: str = "",
        line_text: str = "",
    ) -> None:
        super().__init__(message)
        self.message = message
        self.location = location
        self.hint = hint
        self.line_text = line_text

    def with_text(self, text: str) -> NetlistError:
        """Fill in the offending line from the whole netlist text."""
        if self.location is not None and not self.line_text:
            # Only "\n" ends a line (as for the parser): str.splitlines would also
            # split at form feeds, U+2028 and the like and show the wrong line.
            lines = text.split("\n")
            if 1 <= self.location.line <= len(lines):
                self.line_text = lines[self.location.line - 1]
        return self

    def render(self) -> str:
        """Return the message as the command line prints it."""
        if self.location is None:
            head = self.message
        else:
            head = f"{self.location.describe()}: {self.message}"
        parts = [head]
        if self.location is not None and self.line_text:
            shown, column = _visible_line(self.line_text, self.location.column)
            width = max(1, min(self.location.width, len(shown) - column + 1))
            parts.append("    " + shown)
            parts.append("    " + " " * (column - 1) + "^" * width)
        if self.hint:
            parts.append(f"hint: {self.hint}")
        return "\n".join(parts)

    def __str__(self) -> str:
        return self.render()


class ValidationError(NetlistError):
    """The netlist parsed but describes a network that cannot be solved."""


class UnknownQuantityError(LumpedError, KeyError):
    """A quantity label the analysis has no result for; the message lists those it has.

    Also a :class:`KeyError`, as for any lookup by a missing key.

    Examples
    --------
    >>> print(UnknownQuantityError("voltage at x", ["voltage at out"]))
    no result for 'voltage at x'; the quantities are: 'voltage at out'
    """

    def __init__(self, label: str, known: list[str]) -> None:
        shown = ", ".join(repr(k) for k in known) or "none"
        self.message = f"no result for {label!r}; the quantities are: {shown}"
        self.label = label
        self.known = tuple(known)
        super().__init__(self.message)

    def __str__(self) -> str:
        return self.message


class SolveError(NetlistError):
    """The equations have no unique solution; the message names the elements.

    Carries the location of the first element it names, where there is one.
    """


class ParametersNeeded(LumpedError):  # noqa: N818 (a request, not a failure)
    """A result needs numeric values for free parameters.

    Attributes
    ----------
    parameters : frozenset of sympy.Symbol
        The parameters that need values.

    Examples
    --------
    >>> import sympy
    >>> str(ParametersNeeded([sympy.Symbol("R")], "numbers need values"))
    'values needed for parameter(s): R (numbers need values)'
    """

    def __init__(self, parameters: Iterable[Any], reason: str = "") -> None:
        self.parameters = frozenset(parameters)
        names = ", ".join(sorted(str(p) for p in self.parameters))
        message = f"values needed for parameter(s): {names}"
        if reason:
            message += f" ({reason})"
        super().__init__(message)


class UnknownWordError(LumpedError, KeyError):
    """A word that names no element kind, coupling, quantity or figure.

    Also a :class:`KeyError`, as for any lookup by a missing key.

    Examples
    --------
    >>> from lumped.model import Kind
    >>> try:
    ...     Kind.from_word("flux capacitor")
    ... except UnknownWordError as error:
    ...     print(error)
    'flux capacitor' is not an element kind
    """

    def __init__(self, word: str, what: str) -> None:
        self.word = word
        self.message = f"{word!r} is not {what}"
        super().__init__(self.message)

    def __str__(self) -> str:
        return self.message


class TransformError(LumpedError, ValueError):
    """An s-domain expression the inversion cannot take (not a sum of delayed rational
    terms in s, a zero denominator, or not an expression at all).

    Examples
    --------
    >>> import sympy
    >>> from lumped.inversion import invert
    >>> s = sympy.Symbol("s")
    >>> try:
    ...     invert(sympy.sin(s), s)
    ... except TransformError as error:
    ...     print(error)
    unsupported function of s: sin(s)
    """


class UnitError(LumpedError, ValueError):
    """A unit word the unit registry does not know.

    ``offset`` and ``width`` point into the unit text; the language stage turns
    it into a :class:`NetlistError` at the unit's place in the netlist.
    """

    def __init__(self, message: str, offset: int, width: int, hint: str) -> None:
        super().__init__(message)
        self.offset = offset
        self.width = width
        self.hint = hint


_MAX_SHOWN = 160


def _visible_line(text: str, column: int) -> tuple[str, int]:
    """Expand tabs and clip very long lines around the column, keeping the caret right."""
    text = "".join(c if c == "\t" or c.isprintable() else "?" for c in text)
    before = text[: column - 1].expandtabs(4)
    after = text[column - 1 :].expandtabs(4)
    expanded = before + after
    column = len(before) + 1
    if len(expanded) <= _MAX_SHOWN:
        return expanded, column
    start = max(0, column - 1 - _MAX_SHOWN // 2)
    clipped = expanded[start : start + _MAX_SHOWN]
    prefix = "..." if start else ""
    suffix = "..." if start + _MAX_SHOWN < len(expanded) else ""
    return prefix + clipped + suffix, column - start + len(prefix)
