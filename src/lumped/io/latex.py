"""The formulas as LaTeX: a fragment for a document, and one quantity for a notebook.

Numbers are shown to six significant figures; the exact forms are in the JSON.
"""

from __future__ import annotations

import sympy
from sympy.printing.latex import LatexPrinter

from lumped import __version__
from lumped.io.notation import numeric


class _ShortLatex(LatexPrinter):
    """LaTeX with every number to six significant figures."""

    def _print_Float(self, expr) -> str:  # noqa: N802 - sympy's printer protocol
        text = f"{float(expr):.6g}"
        if "e" in text:
            mantissa, exponent = text.split("e")
            return rf"{mantissa} \cdot 10^{{{int(exponent)}}}"
        return text


def _latex(expr: sympy.Expr) -> str:
    return _ShortLatex().doprint(numeric(expr, 6))


def to_latex(analysis) -> str:
    """The formulas as a LaTeX fragment (numbers to 6 significant figures).

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> analysis = analyse(loads("current source I at a step 1 mA\\n"
    ...                          "resistor R from a to ground 1 kohm\\n"))
    >>> print(to_latex(analysis).splitlines()[2])
    \\[ X(s) = \\frac{1}{s} \\]
    """
    lines = [f"% lumped {__version__}: {analysis.netlist.source}"]
    for result in analysis.results:
        lines.append(f"% {result.quantity.label} [{result.unit}]")
        lines.append(r"\[ X(s) = " + _latex(result.response.transform) + r" \]")
        if result.time is not None:
            lines.append(r"\[ x(t) = " + _latex(result.time.expression)
                         + r", \quad t \ge 0 \]")
    return "\n".join(lines) + "\n"


def quantity_latex(result) -> str:
    """One quantity's closed form as inline LaTeX, ``$x(t) = ...$``; ``$X(s) = ...$`` without one.

    What a notebook shows for a :class:`lumped.analysis.QuantityResult`.

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> analysis = analyse(loads("voltage source V at a step 10 V\\n"
    ...                          "resistor R from a to b 1 kohm\\n"
    ...                          "capacitor C from b to ground 1 uF\\nwatch voltage at b\\n"))
    >>> print(quantity_latex(analysis.result("voltage at b")))
    $x(t) = 10 - 10 e^{- 1000 t}, \\quad t \\ge 0$
    """
    if result.time is None:
        return "$X(s) = " + _latex(result.response.transform) + "$"
    return "$x(t) = " + _latex(result.time.expression) + r", \quad t \ge 0$"
