"""Units: exact SI factors and dimensions for the unit words of a netlist.

pint knows the unit names, prefixes and definitions; this module asks it one
unit word at a time (``kN``, ``s``, ``m``) and combines them by the ``*``, ``/``
and ``^`` the grammar has already split out, so no netlist text is ever handed
to an expression evaluator.  Factors become exact rationals from pint's
decimal definitions.

Building pint's registry takes longer than reading a whole netlist, so the
words the language documents (SI prefixes on the electrical and mechanical
units, the usual imperial ones) are looked up in :mod:`~lumped.language.unit_table`,
a table generated from pint by ``scripts/make_unit_table.py`` and checked
against pint by the tests; pint is asked only about other words.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from fractions import Fraction
from functools import cache

import sympy

from lumped.errors import UnitError
from lumped.language.unit_table import UNIT_TABLE

Dims = tuple[tuple[str, int], ...]
DIMENSIONLESS: Dims = ()


_ATOM = re.compile(r"(%|(?:µ|Ω|°|[A-Za-z])[A-Za-z0-9µΩ°_]*)(?:\^(-?\d+))?$")
_SPLIT = re.compile(r"([*/·])")


@cache
def registry():
    """The shared pint registry (built once: it takes a noticeable fraction of a second)."""
    import pint

    from lumped.cachedir import cache_folder

    # pint can keep its parsed definitions in a cache; that saves most of the
    # registry's build time on every later run.  Without a writable cache
    # folder it simply builds them each time.
    folder = cache_folder("pint")
    if folder is not None:
        try:
            return pint.UnitRegistry(cache_folder=folder)
        except Exception:
            pass
    return pint.UnitRegistry()


def _exact(value: float) -> sympy.Rational:
    fraction = Fraction(repr(float(value)))
    return sympy.Rational(fraction.numerator, fraction.denominator)


def _normalise(dimensionality) -> Dims:
    return tuple(sorted((str(k), int(v)) for k, v in dict(dimensionality).items() if v))


def _scale(value: float | int) -> sympy.Rational:
    """A definition's scale as a rational: ``0.0254`` stays decimal, ``1/36`` is recovered."""
    exact = _exact(value)
    if len(repr(float(value)).lstrip("-0.").replace(".", "").split("e")[0]) >= 15:
        simple = Fraction(repr(float(value))).limit_denominator(10**6)
        if float(simple) == float(value):
            return sympy.Rational(simple.numerator, simple.denominator)
    return exact


@cache
def _definition_factor(name: str) -> sympy.Expr:
    """Exact SI factor of a pint unit, following its definition chain with rationals.

    pint multiplies its decimal definitions in floating point (a foot is a third
    of a yard, a pound-force is g_0 times a pound), which would leave factors a
    rounding error away from their exact values; ``π`` stays symbolic.
    """
    ureg = registry()
    name = ureg.get_name(name)
    if name == "pi":
        return sympy.pi
    definition = ureg._units[name]
    if not definition.converter.is_multiplicative:
        raise KeyError(name)  # offset or logarithmic units (degC, dB) have no factor
    if definition.is_base:
        return sympy.Rational(1, 1000) if name == "gram" else sympy.Integer(1)
    factor = _scale(definition.converter.scale)
    for reference, exponent in definition.reference.items():
        if not reference.startswith("["):
            factor *= _definition_factor(reference) ** sympy.Rational(str(exponent))
    return factor


@cache
def _atom(word: str) -> tuple[sympy.Expr, Dims]:
    """Exact SI factor and dimensions of one unit word (``kN``, ``uF``, ``lbf``).

    Raises KeyError for a word that is not a unit, or one without a factor (``degC``).
    """
    entry = UNIT_TABLE.get(word)
    if entry is not None:
        numerator, denominator, pi_power, dims = entry
        return sympy.Rational(numerator, denominator) * sympy.pi**pi_power, dims
    return atom_from_registry(word)


def atom_from_registry(word: str) -> tuple[sympy.Expr, Dims]:
    """:func:`_atom` asked of pint's registry itself (what the unit table is made from).

    Examples
    --------
    >>> atom_from_registry("kohm")
    (1000, (('[current]', -2), ('[length]', 2), ('[mass]', 1), ('[time]', -3)))
    """
    ureg = registry()
    # Symbols the language accepts that pint spells out.
    word = {"%": "percent", "°": "degree"}.get(word, word)
    candidates = ureg.parse_unit_name(word)
    if not candidates:
        raise KeyError(word)
    prefix, name, suffix = candidates[0]
    unit = ureg.Unit(prefix + name + suffix)
    if not ureg._units[name].converter.is_multiplicative:
        raise KeyError(word)
    quantity = (1 * unit).to_base_units()
    factor = _definition_factor(name)
    if prefix:
        factor *= _scale(ureg._prefixes[prefix].converter.scale)
    if abs(float(factor) - float(quantity.magnitude)) > 1e-12 * abs(float(quantity.magnitude)):
        factor = _exact(quantity.magnitude)  # a definition this walk does not understand
    return factor, _normalise(quantity.dimensionality)


@cache
def parse_unit(text: str) -> tuple[sympy.Rational, Dims]:
    """Return the exact SI factor and the dimensions of a unit written like ``kN*s/m``.

    Examples
    --------
    >>> parse_unit("kN*s/m")[0]
    1000
    >>> parse_unit("uF")[0]
    1/1000000
    """
    factor = sympy.Integer(1)
    dims: dict[str, int] = {}
    sign = 1
    offset = 0
    for piece in _SPLIT.split(text):
        if piece in ("*", "·"):
            sign = 1
        elif piece == "/":
            sign = -1
        elif piece:
            match = _ATOM.match(piece)
            if match is None:
                raise UnitError(f"cannot read unit '{piece}'", offset, len(piece), _UNIT_HINT)
            word, power = match.group(1), int(match.group(2) or 1)
            try:
                atom_factor, atom_dims = _atom(word)
            except KeyError:
                raise UnitError(
                    f"unknown unit '{word}'", offset, len(word), _suggest_unit(word)
                ) from None
            exponent = sign * power
            factor *= atom_factor**exponent
            for dim, exp in atom_dims:
                dims[dim] = dims.get(dim, 0) + exp * exponent
        offset += len(piece)
    return factor, tuple(sorted((k, v) for k, v in dims.items() if v))


def is_unit(word: str) -> bool:
    """Whether a word reads as a unit.

    Examples
    --------
    >>> is_unit("kohm"), is_unit("R1")
    (True, False)
    """
    try:
        parse_unit(word)
    except UnitError:
        return False
    return True


_UNIT_HINT = "write units such as V, mA, uF, kohm, kN/m, N*s/m, kg*m^2, rad/s, lbf/in"


def _suggest_unit(word: str) -> str:
    import difflib

    common = [
        "V", "mV", "kV", "A", "mA", "ohm", "kohm", "F", "uF", "nF", "pF", "H", "mH", "uH",
        "s", "ms", "us", "ns", "Hz", "kHz", "MHz", "m", "mm", "kg", "g", "N", "kN", "rad",
        "deg", "rpm", "lbf", "inch", "lb", "W", "J", "percent",
    ]
    close = difflib.get_close_matches(word, common, n=3, cutoff=0.5)
    if close:
        return "did you mean " + " or ".join(repr(c) for c in close) + "?"
    return _UNIT_HINT


@cache
def dims_of(si_unit: str) -> Dims:
    """Dimensions of an SI unit written by the tool itself (``"N*s/m"``, ``""``).

    Examples
    --------
    >>> dims_of("N")
    (('[length]', 1), ('[mass]', 1), ('[time]', -2))
    """
    if not si_unit:
        return DIMENSIONLESS
    return parse_unit(si_unit)[1]


# Named units used to describe a dimension back to the user.
_NAMED = (
    "V", "A", "ohm", "F", "H", "s", "Hz", "m", "kg", "N", "m/s", "m/s^2", "N/m", "N*s/m",
    "kg*m^2", "N*m", "N*m/rad", "N*m*s/rad", "V*s/rad", "W", "J", "V/s", "A/s", "V*s", "A*s",
    "N*s", "m*s", "N/s", "m/s^3",
)


def describe(dims: Dims) -> str:
    """A readable unit for dimensions: a named SI unit where one fits, else base units.

    Examples
    --------
    >>> describe(dims_of("kN/m"))
    'N/m'
    >>> describe(())
    'a plain number'
    """
    if not dims:
        return "a plain number"
    for name in _NAMED:
        if dims_of(name) == dims:
            return name
    base = {"[length]": "m", "[mass]": "kg", "[time]": "s", "[current]": "A",
            "[temperature]": "K", "[substance]": "mol", "[luminosity]": "cd"}
    top = [f"{base.get(d, d)}" + (f"^{e}" if e != 1 else "") for d, e in dims if e > 0]
    bottom = [f"{base.get(d, d)}" + (f"^{-e}" if e != -1 else "") for d, e in dims if e < 0]
    text = "*".join(top) or "1"
    if bottom:
        text += "/" + "/".join(bottom)
    return text


def multiply(a: Dims, b: Dims, power: int = 1) -> Dims:
    """Dimensions of ``a * b**power``.

    Examples
    --------
    >>> describe(multiply(dims_of("N"), dims_of("m"), -1))
    'N/m'
    """
    dims = dict(a)
    for dim, exp in b:
        dims[dim] = dims.get(dim, 0) + exp * power
    return tuple(sorted((k, v) for k, v in dims.items() if v))


def power(a: Dims, exponent: Fraction) -> Dims | None:
    """Dimensions of ``a**exponent``, or None when a fractional power leaves them fractional.

    Examples
    --------
    >>> describe(power(dims_of("m^2"), Fraction(1, 2)))
    'm'
    >>> power(dims_of("m"), Fraction(1, 2)) is None
    True
    """
    result = []
    for dim, exp in a:
        value = exp * exponent
        if value.denominator != 1:
            return None
        result.append((dim, int(value)))
    return tuple(sorted((k, v) for k, v in result if v))


@dataclass(frozen=True)
class SIValue:
    """An exact magnitude in coherent SI units with its dimensions."""

    value: sympy.Expr
    dims: Dims
