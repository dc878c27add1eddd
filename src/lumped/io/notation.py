"""Numbers and formulas for reading: engineering notation, short formulas, wrapped lines.

Examples
--------
>>> engineering(0.0042, "m")
'4.20 mm'
"""

from __future__ import annotations

import math
import textwrap

import sympy

_PREFIXES = [
    (1e12, "T"), (1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ"),
    (1e-9, "n"), (1e-12, "p"), (1e-15, "f"),
]
# Units that take an SI prefix in the report; others are shown as plain numbers.
_PREFIXABLE = {"V", "A", "ohm", "F", "H", "s", "Hz", "m", "N", "W", "J", "N/m", "N*s/m", "N*m",
               "N*m/rad", "V/s", "A/s", "V*s", "A*s"}
_PRETTY_UNIT = {"ohm": "Ω", "m/s^2": "m/s²", "rad/s^2": "rad/s²", "kg*m^2": "kg·m²",
                "N*m": "N·m", "N*s/m": "N·s/m", "N*m/rad": "N·m/rad", "N*m*s/rad": "N·m·s/rad",
                "V*s/rad": "V·s/rad"}


def engineering(value: float | None, unit: str = "", digits: int = 3) -> str:
    """Format a number in engineering notation with an SI prefix.

    Examples
    --------
    >>> engineering(6.83e-5, "s")
    '68.3 µs'
    >>> engineering(0.0042, "m")
    '4.20 mm'
    >>> engineering(-1234.5, "V")
    '-1.23 kV'
    >>> engineering(5.56e-25, "m")
    '5.56e-25 m'
    """
    if value is None:
        return "—"
    if isinstance(value, float) and (math.isnan(value) or math.isinf(value)):
        return f"{value} {unit}".strip()
    shown_unit = _PRETTY_UNIT.get(unit, unit)
    if value == 0:
        return f"0 {shown_unit}".strip()
    magnitude = abs(value)
    if unit not in _PREFIXABLE:
        if 1e-3 <= magnitude < 1e5:
            return f"{_significant(value, digits)} {shown_unit}".strip()
        return f"{value:.{digits - 1}e} {shown_unit}".strip()
    smallest, largest = _PREFIXES[-1][0], _PREFIXES[0][0]
    if magnitude < smallest * 0.9995 or magnitude >= largest * 1000:
        # Beyond the prefixes: a plain power of ten reads better than 0.000000000556 fm.
        return f"{value:.{digits - 1}e} {shown_unit}".strip()
    if unit == "m" and 1e-3 <= magnitude < 1:
        factor, prefix = 1e-3, "m"
    else:
        factor, prefix = next(((f, p) for f, p in _PREFIXES if magnitude >= f * 0.9995),
                              _PREFIXES[-1])
    return f"{_significant(value / factor, digits)} {prefix}{shown_unit}".strip()


def _significant(value: float, digits: int) -> str:
    if value == 0:
        return "0"
    exponent = math.floor(math.log10(abs(value)))
    decimals = max(0, digits - 1 - exponent)
    text = f"{value:.{decimals}f}"
    if abs(float(text)) >= 10 ** (exponent + 1) and decimals > 0:
        text = f"{value:.{decimals - 1}f}"
    return text


def exact_value(value: sympy.Expr | None, unit: str) -> str:
    """An exact model value for display: a number in engineering form, or the symbol."""
    if value is None:
        return "—"
    if value.free_symbols:
        return f"{value} {_PRETTY_UNIT.get(unit, unit)}".strip()
    return engineering(float(value), unit)



def pretty_unit(unit: str) -> str:
    """A unit as the report shows it.

    Examples
    --------
    >>> pretty_unit("ohm"), pretty_unit("m/s^2"), pretty_unit("V")
    ('Ω', 'm/s²', 'V')
    """
    return _PRETTY_UNIT.get(unit, unit)




class _ShortFloats(sympy.printing.str.StrPrinter):
    """Prints numbers to a few significant figures for reading; JSON keeps full precision."""

    def __init__(self, digits: int = 4) -> None:
        super().__init__()
        self.digits = digits

    def _print_Float(self, expr) -> str:  # noqa: N802 - sympy's printer protocol
        return f"{float(expr):.{self.digits}g}".replace("e+0", "e").replace("e-0", "e-").replace(
            "e+", "e")

    def _print_Rational(self, expr) -> str:  # noqa: N802
        if expr.q == 1:
            return self._print_Float(sympy.Float(expr.p)) if abs(expr.p) >= 10**5 else str(expr.p)
        return self._print_Float(sympy.Float(expr))

    _print_Integer = _print_Rational  # noqa: N815 - sympy's printer protocol


def numeric(expr: sympy.Expr, digits: int = 15) -> sympy.Expr:
    """Evaluate every constant part of an expression (roots, pi, fractions) to floats."""
    if expr.is_Integer:
        return expr
    if expr.is_Pow and expr.exp.is_Rational and not expr.base.is_number:
        return sympy.Pow(numeric(expr.base, digits), expr.exp)
    if expr.is_number:
        return sympy.Float(expr.evalf(digits), digits) if expr.is_real is not False \
            else expr.evalf(digits)
    if not expr.args:
        return expr
    return expr.func(*[numeric(arg, digits) for arg in expr.args])


def short_formula(expr: sympy.Expr, digits: int = 4) -> str:
    """A readable one-line form of an expression: numbers to ``digits`` figures.

    Examples
    --------
    >>> t = sympy.Symbol("t")
    >>> short_formula(sympy.Rational(1, 3) * sympy.exp(-t / 7))
    '0.3333*exp(-0.1429*t)'
    """
    return _ShortFloats(digits).doprint(numeric(expr))


def short_number(value: float, digits: int = 4) -> str:
    """A number to ``digits`` significant figures, as in :func:`short_formula`.

    Examples
    --------
    >>> short_number(1234.5678), short_number(2.0)
    ('1235', '2')
    """
    return _ShortFloats(digits).doprint(sympy.Float(value))


WIDTH = 80


def wrap(prefix: str, text: str, width: int = WIDTH) -> list[str]:
    """``text`` wrapped to ``width`` columns after ``prefix``, later lines indented under it.

    Examples
    --------
    >>> wrap("  note: ", "one two three", width=16)
    ['  note: one two', '        three']
    """
    indent = " " * len(prefix)
    return textwrap.wrap(text, width=width, initial_indent=prefix, subsequent_indent=indent,
                         break_long_words=True, break_on_hyphens=False) or [prefix]
