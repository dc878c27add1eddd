"""Values: arithmetic evaluated to exact SI magnitudes, units and ranges checked.

:class:`Scope` evaluates the arithmetic trees of :mod:`lumped.language.syntax`
against the parameters defined so far; :class:`ValueReader` is where every value
read from a netlist passes: the unit it must have, real, within the documented
range (:mod:`lumped.algebra.exact`), and not so large that exact arithmetic on
it would stall.
"""

from __future__ import annotations

import difflib
import math
import re
from fractions import Fraction

import sympy

from lumped.algebra.exact import LARGEST_VALUE, SMALLEST_VALUE, rationalise
from lumped.constants import STANDARD_GRAVITY
from lumped.errors import Location, NetlistError, UnitError
from lumped.language.grammar import MAX_BITS, MAX_EXPONENT
from lumped.language.syntax import Expr, Name, Num, unit_words
from lumped.language.units import (
    DIMENSIONLESS,
    Dims,
    SIValue,
    describe,
    dims_of,
    is_unit,
    multiply,
    parse_unit,
    power,
)


class Scope:
    """The parameters defined so far, and the evaluator of arithmetic against them.

    Examples
    --------
    >>> from lumped.language.syntax import Name, Num, Op
    >>> here = Location("f", 1, 1)
    >>> scope = Scope("f")
    >>> scope.define("R", SIValue(sympy.Integer(2000), dims_of("ohm")))
    >>> result = scope.evaluate(Op("*", (Name("R", here), Num("3", None, here)), here))
    >>> result.value, describe(result.dims)
    (6000, 'ohm')
    """

    def __init__(self, source: str) -> None:
        self.source = source
        self._values: dict[str, SIValue] = {}

    def define(self, name: str, value: SIValue) -> None:
        """Give ``name`` its value (exact SI magnitude and dimensions) for later expressions."""
        self._values[name] = value

    def evaluate(self, expr: Expr, expected: Dims | None = None) -> SIValue:
        """The exact SI value and dimensions of ``expr``; units are checked as it goes.

        ``expected`` (the dimensions the caller needs) only settles what a bare
        ``g`` means: standard gravity where an acceleration is expected, else grams.
        """
        if isinstance(expr, Num):
            return self._number(expr, expected)
        if isinstance(expr, Name):
            if expr.name not in self._values:
                known = list(self._values)
                close = difflib.get_close_matches(expr.name, known, n=1)
                hint = (
                    f"did you mean '{close[0]}'?"
                    if close
                    else f"define it first with `let {expr.name} = ...`"
                )
                if is_unit(expr.name):
                    hint = (f"'{expr.name}' is a unit: write it right after a number "
                            f"(`2 {expr.name}`), or multiply by one (`... * 1 {expr.name}`)")
                raise NetlistError(f"unknown parameter '{expr.name}'", expr.location, hint=hint)
            return self._values[expr.name]
        op = expr.op
        if op == "pi":
            return SIValue(sympy.pi, DIMENSIONLESS)
        if op == "neg":
            inner = self.evaluate(expr.args[0], expected)
            return SIValue(-inner.value, inner.dims)
        if op == "sqrt":
            inner = self.evaluate(expr.args[0])
            dims = power(inner.dims, Fraction(1, 2))
            if dims is None:
                raise NetlistError(
                    f"the square root of {describe(inner.dims)} has no unit",
                    expr.location,
                    hint="take roots of quantities whose units are squares",
                )
            if inner.value.is_negative:  # a number, or -n with n a (positive) parameter
                raise NetlistError("square root of a negative value", expr.location,
                                   hint="the value under sqrt(...) must not be negative")
            return SIValue(sympy.sqrt(inner.value), dims)
        left = self.evaluate(expr.args[0], expected if op in "+-" else None)
        right = self.evaluate(expr.args[1], expected if op in "+-" else None)
        if op in "+-":
            if left.dims != right.dims:
                raise NetlistError(
                    f"cannot {'add' if op == '+' else 'subtract'} {describe(right.dims)} "
                    f"{'to' if op == '+' else 'from'} {describe(left.dims)}",
                    expr.location,
                    hint="both sides of + and - need the same kind of unit",
                )
            value = left.value + right.value if op == "+" else left.value - right.value
            return SIValue(_bounded(value, expr.location), left.dims)
        if op == "*":
            return SIValue(_bounded(left.value * right.value, expr.location),
                           multiply(left.dims, right.dims))
        if op == "/":
            if right.value == 0:
                raise NetlistError("division by zero", expr.location,
                                   hint="the divisor works out to zero")
            return SIValue(_bounded(left.value / right.value, expr.location),
                           multiply(left.dims, right.dims, -1))
        if op == "^":
            if right.dims or not right.value.is_Rational:
                hint = "write a power without a unit, such as `^2` or `^-1`"
                if isinstance(expr.args[1], Num) and expr.args[1].unit:
                    # `10^30 ohm` reads as 10 to the power `30 ohm`.
                    hint = (f"the unit went onto the exponent: write "
                            f"`({_source_text(expr.args[0])}^{expr.args[1].value}) * 1 "
                            f"{expr.args[1].unit}`")
                raise NetlistError(
                    "an exponent must be a plain rational number", expr.args[1].location,
                    hint=hint,
                )
            exponent = Fraction(int(right.value.p), int(right.value.q))
            if abs(exponent) > 64:
                raise NetlistError("exponent too large (the limit is 64)", expr.args[1].location,
                                   hint="name parts of the expression with let")
            dims = power(left.dims, exponent)
            if dims is None:
                raise NetlistError(
                    f"{describe(left.dims)} to the power {exponent} has no unit", expr.location,
                    hint="a fractional power needs a unit whose exponents it divides",
                )
            if exponent.denominator != 1 and (
                    left.value.is_negative or left.value.is_real is False):
                raise NetlistError(
                    f"{format_value(left.value)} to the power {exponent} is not a real number",
                    expr.location,
                    hint="a fractional power needs a value that is not negative",
                )
            if left.value == 0 and exponent < 0:
                raise NetlistError("division by zero", expr.location,
                                   hint="zero cannot be raised to a negative power")
            if _bits(left.value) * abs(exponent.numerator) > MAX_BITS:
                raise _too_large(expr.location)
            return SIValue(left.value ** sympy.Rational(exponent.numerator, exponent.denominator),
                           dims)
        raise NetlistError(f"unknown operation {op}", expr.location,  # grammar prevents this
                           hint="use + - * / ^ and parentheses")

    def _number(self, expr: Num, expected: Dims | None) -> SIValue:
        _, _, exponent = expr.value.lower().partition("e")
        if exponent and abs(int(exponent)) > MAX_EXPONENT:
            raise NetlistError(
                f"the number {expr.value} is out of range (the limit is 1e{MAX_EXPONENT})",
                expr.location, hint="use a prefixed unit or a smaller power of ten",
            )
        exact = Fraction(expr.value)
        value = _bounded(sympy.Rational(exact.numerator, exact.denominator), expr.location)
        if expr.unit is None:
            return SIValue(value, DIMENSIONLESS)
        if expr.unit == "g" and expected == dims_of("m/s^2"):
            # `38 g` where an acceleration is expected means standard gravity, not grams.
            return SIValue(value * STANDARD_GRAVITY, expected)
        try:
            factor, dims = parse_unit(expr.unit)
        except UnitError as exc:
            where = expr.unit_location or expr.location
            raise NetlistError(
                str(exc),
                Location(self.source, where.line, where.column + exc.offset, exc.width),
                hint=exc.hint,
            ) from None
        return SIValue(value * factor, dims)


def _source_text(expr: Expr) -> str:
    """A short rendering of an arithmetic tree for hints (numbers and names as written)."""
    if isinstance(expr, Num):
        return expr.value + (f" {expr.unit}" if expr.unit else "")
    if isinstance(expr, Name):
        return expr.name
    return "..."


def _not_real(value: sympy.Expr) -> bool:
    """True when a value is complex: sqrt(-2), (-8)^(1/3), or such a factor times a parameter."""
    if value.is_real is False or value.has(sympy.I):
        return True
    return any(p.is_number and p.is_real is False for p in value.atoms(sympy.Pow))


def _bits(value: sympy.Expr) -> int:
    """Size of the exact rational part of a value (numerator or denominator, in bits)."""
    coefficient = value if value.is_Rational else value.as_coeff_Mul()[0]
    if not coefficient.is_Rational:
        return 0
    return max(int(coefficient.p).bit_length(), int(coefficient.q).bit_length())


def _too_large(location: Location) -> NetlistError:
    return NetlistError(
        f"a value in this expression is too large to handle exactly (more than about "
        f"{MAX_BITS * 3 // 10} digits)", location,
        hint="check the powers of ten and the units",
    )


def _bounded(value: sympy.Expr, location: Location) -> sympy.Expr:
    """Refuse exact values too large to work with (they would stall the algebra)."""
    if _bits(value) > MAX_BITS:
        raise _too_large(location)
    return value


class ValueReader:
    """Reads values from expressions: exact, in the unit asked for, real and in range.

    Irrational values (``pi``, ``sqrt(2)``) stay exact; the places they were
    written are collected in :attr:`rounded`, since the algebra takes them at
    40 digits.

    Examples
    --------
    >>> from lumped.language.syntax import Num, Op
    >>> here = Location("f", 1, 1)
    >>> reader = ValueReader("f")
    >>> reader.read(Num("4.7", "uF", here), "F", "a capacitance", positive=True)
    47/10000000
    >>> reader.read(Op("sqrt", (Num("2", None, here),), here), "", "a ratio")
    sqrt(2)
    >>> reader.rounded == [here]
    True
    """

    def __init__(self, source: str) -> None:
        self.scope = Scope(source)
        self.rounded: list[Location] = []

    def read(self, expr: Expr, unit: str, what: str, *, positive: bool = False,
             number: bool = False, hint: str = "a physical element has a positive value",
             largest: sympy.Expr = LARGEST_VALUE, ranged: bool = True) -> sympy.Expr:
        """The exact SI value of ``expr``, checked for its unit, reality and range.

        Every value read from the text passes here: it must be real and lie in
        the documented range (:mod:`lumped.algebra.exact`).  Values stay exact (``pi``
        stays ``pi``); where one is irrational its place is noted, since the
        algebra takes it at :data:`~lumped.algebra.exact.IRRATIONAL_DIGITS` digits.

        Parameters
        ----------
        expr : Expr
            The expression as written.
        unit : str
            The SI unit the value must reduce to (``""`` for a plain number).
        what : str
            What the value is, for messages (``"the value of resistor 'R1'"``).
        positive : bool
            Refuse zero and negative values.
        number : bool
            Refuse values that depend on a parameter without a value.
        hint : str
            The hint given when a positive value is not.
        largest : sympy.Expr
            The largest magnitude accepted.
        ranged : bool
            Check the magnitude against the accepted range at all.
        """
        expected = dims_of(unit)
        _check_rotation_units(expr, unit, what)
        result = self.scope.evaluate(expr, expected)
        if result.dims != expected:
            got = describe(result.dims)
            want = describe(expected) if expected else "a plain number"
            if not result.dims:
                message = f"{what} needs a unit: expected {want}, got a plain number"
                hint = f"add the unit after the number, e.g. `{example_value(unit)}`"
            else:
                message = f"{what} must be in {want}, not {got}"
                hint = f"write it in {want} (or a prefixed form), e.g. `{example_value(unit)}`"
            raise NetlistError(message, expr.location, hint=hint)
        value = result.value
        if _not_real(value):
            raise NetlistError(f"{what} is not a real number ({value})", expr.location,
                               hint="check the signs under roots and fractional powers")
        if number and value.free_symbols:
            names = ", ".join(sorted(str(x) for x in value.free_symbols))
            raise NetlistError(
                f"{what} must be a number; it depends on {names}, which has no value",
                expr.location,
                hint="give the parameter a value with `let` or `--set NAME=VALUE`",
            )
        if value.is_number:
            value = self._checked_number(value, expr, unit, what,
                                         largest if ranged else sympy.oo, positive and ranged)
        if positive and value.is_number and not (value > 0):
            raise NetlistError(
                f"{what} must be greater than zero, not {format_value(value)}",
                expr.location,
                hint=hint,
            )
        return value

    def _checked_number(self, value: sympy.Expr, expr: Expr, unit: str, what: str,
                        largest: sympy.Expr, positive: bool) -> sympy.Expr:
        """A real number within the accepted range (irrational ones are noted)."""
        # Checked at 40 digits; the model keeps the exact value (pi stays pi) and the
        # algebra takes irrational numbers as rationals where it meets them.
        exact = rationalise(value)
        if not exact.is_Rational:  # nothing the grammar builds, but never pass it on
            raise NetlistError(f"{what} cannot be worked out as a number ({value})",
                               expr.location, hint="simplify the expression")
        if exact != value:
            self.rounded.append(expr.location)
        # A physical size (positive) lies within the range; a signed value (an
        # amplitude, an initial condition, a bound) may also be zero or tiny.
        smallest = SMALLEST_VALUE if positive else 0
        if exact != 0 and not smallest <= abs(exact) <= largest:
            shown = describe(dims_of(unit)) if unit else ""
            raise NetlistError(
                f"{what} is {format_value(exact)}{' ' + shown if shown else ''}, outside the range "
                f"the tool accepts: {float(smallest):g} to {float(largest):g}"
                f"{' ' + shown if shown else ''} in magnitude",
                expr.location,
                hint="check the power of ten and the unit prefix",
            )
        return value


_ANGLE_WORDS = ("rad", "deg", "degree", "rev", "rpm", "turn", "grad", "arcmin", "arcsec")


def _check_rotation_units(expr: Expr, unit: str, what: str) -> None:
    """Hz and rad/s have the same dimensions; refuse the one that is off by 2 pi."""
    for text, where in unit_words(expr):
        words = re.findall(r"[A-Za-zµΩ°]+", text)
        angular = any(w in _ANGLE_WORDS for w in words)
        cycles = any(w.endswith("Hz") for w in words)
        if unit == "Hz" and angular:
            raise NetlistError(
                f"{what} must be in Hz, not an angular speed ({text})", where,
                hint="f = omega / (2 pi): write e.g. `50 Hz`",
            )
        if unit.startswith("rad") and cycles:
            raise NetlistError(
                f"{what} must be in rad/s, not a frequency ({text})", where,
                hint="omega = 2 pi f: write e.g. `314 rad/s` or `3000 rpm`",
            )


_EXAMPLE_VALUES = {
    "ohm": "2.2 kohm", "H": "10 uH", "F": "4.7 uF", "V": "12 V", "A": "2 A", "kg": "350 kg",
    "N/m": "22 kN/m", "N*s/m": "1.8 kN*s/m", "N": "100 N", "m/s": "1.5 m/s", "m": "30 mm",
    "kg*m^2": "0.02 kg*m^2", "N*m/rad": "150 N*m/rad", "N*m*s/rad": "0.01 N*m*s/rad",
    "N*m": "2 N*m", "rad/s": "100 rad/s", "s": "200 us", "Hz": "50 Hz", "m/s^2": "9.81 m/s^2",
    "V*s/rad": "0.05 V*s/rad",
}


def example_value(unit: str) -> str:
    """A sample value with a unit of the given SI unit's kind, for hints.

    Examples
    --------
    >>> example_value("ohm")
    '2.2 kohm'
    """
    return _EXAMPLE_VALUES.get(unit, f"1 {unit}" if unit else "2")


def format_value(value: sympy.Expr) -> str:
    """A value for a message: a short decimal, or sympy's own digits beyond double range.

    Examples
    --------
    >>> format_value(sympy.Rational(1, 3))
    '0.333333'
    >>> format_value(sympy.Integer(10) ** 400)
    '1.00e+400'
    """
    try:
        number = float(value)
    except TypeError:
        return str(value)
    if value != 0 and (number == 0 or not math.isfinite(number)):
        return str(sympy.Float(value, 3))  # beyond double precision: sympy's own digits
    return f"{number:g}"
