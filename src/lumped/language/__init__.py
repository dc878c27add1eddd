"""The language stage: netlist text in, an immutable :class:`lumped.model.Netlist` out.

Receives the text of a netlist (or the path of a ``.lumped`` file) and, if
given, parameter values set from outside (``{"R": "4.7 kohm"}``); hands on a
:class:`~lumped.model.Netlist` whose values are exact SI magnitudes, units and
ranges checked.  Every mistake in the text is a :class:`~lumped.errors.NetlistError`
with its file, line, column, the line itself and a hint.

Modules, in the order text passes them:

- :mod:`~lumped.language.prepare`: decoding and text-level checks (size, encoding, nesting)
- :mod:`~lumped.language.grammar`: the lark grammar, keywords, reserved names, limits
- :mod:`~lumped.language.diagnostics`: parse errors worded for the user; the slip catalogue
- :mod:`~lumped.language.transform`: parse tree to the typed statements of
  :mod:`~lumped.language.syntax`
- :mod:`~lumped.language.values`: arithmetic to exact SI values; units, ranges
  (:mod:`~lumped.language.units` reads unit words)
- :mod:`~lumped.language.build`: statements to the model
- :mod:`~lumped.language.parse`: the entry points; :mod:`~lumped.language.reference`:
  the language reference (``lumped --syntax``)

Examples
--------
>>> from lumped.language import parse_text
>>> parse_text("capacitor C1 from a to ground 4.7 uF\\n").elements[0].value
47/10000000
"""

from __future__ import annotations

from lumped.language.diagnostics import SLIP_EXAMPLES
from lumped.language.grammar import (
    FILE_EXTENSION,
    KEYWORDS,
    MAX_BITS,
    MAX_BYTES,
    MAX_EXPONENT,
    MAX_LINE,
    MAX_NESTING,
    MAX_STATEMENTS,
    RESERVED_NAMES,
)
from lumped.language.parse import load_file, parse_text
from lumped.language.reference import language_reference
from lumped.language.values import example_value

__all__ = [
    "FILE_EXTENSION",
    "KEYWORDS",
    "MAX_BITS",
    "MAX_BYTES",
    "MAX_EXPONENT",
    "MAX_LINE",
    "MAX_NESTING",
    "MAX_STATEMENTS",
    "RESERVED_NAMES",
    "SLIP_EXAMPLES",
    "example_value",
    "language_reference",
    "load_file",
    "parse_text",
]
