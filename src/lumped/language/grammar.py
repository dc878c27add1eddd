"""The grammar and the fixed facts of the language: keywords, reserved names, size limits.

The lark grammar in ``grammar/lumped.lark`` is the single definition of the
syntax; this module loads it once (lark keeps the parser tables in the cache
folder) and states the limits beyond which an input is refused.
"""

from __future__ import annotations

from functools import cache
from importlib import resources
from pathlib import Path
from types import MappingProxyType

from lark import Lark

FILE_EXTENSION = ".lumped"

# Resource limits: inputs beyond these are refused with a clear message.
MAX_BYTES = 2_000_000
MAX_STATEMENTS = 5_000
MAX_NESTING = 200
MAX_LINE = 20_000
MAX_EXPONENT = 600  # largest power of ten written in a number (1e600)
MAX_BITS = 2_048  # largest numerator or denominator of an exact value (about 600 digits)

# Names the published formulas use themselves: a parameter so named would read
# ambiguously in the JSON and LaTeX (and could not be parsed back).
RESERVED_NAMES = MappingProxyType({
    "s": "the Laplace variable", "t": "time", "pi": "the number pi",
    "I": "the imaginary unit", "E": "Euler's number", "S": "sympy singletons",
    "N": "numeric evaluation", "Q": "assumptions", "O": "order terms", "oo": "infinity",
    "exp": "the exponential", "sqrt": "the square root", "sin": "sine", "cos": "cosine",
    "sinh": "hyperbolic sine", "cosh": "hyperbolic cosine", "Heaviside": "the unit step",
    "DiracDelta": "impulses", "Piecewise": "case forms", "Eq": "conditions",
})

# The words that lead a statement.
KEYWORDS = (
    "let", "resistor", "inductor", "capacitor", "voltage source", "current source", "mass",
    "spring", "damper", "force source", "velocity source", "displacement source", "inertia",
    "torsion spring", "rotary damper", "torque source", "angular velocity source",
    "transformer", "lever", "gear", "belt", "rack", "motor", "watch", "window", "require",
    "settling band", "gravity", "drop",
)


def grammar_text() -> str:
    """Return the text of the lark grammar shipped with the package.

    Examples
    --------
    >>> "let_value" in grammar_text()
    True
    """
    try:
        return resources.files("lumped.grammar").joinpath("lumped.lark").read_text("utf-8")
    except (ModuleNotFoundError, FileNotFoundError, TypeError):
        # Running from a source checkout without installing: grammar/ beside src/.
        here = Path(__file__).resolve().parents[3] / "grammar" / "lumped.lark"
        return here.read_text("utf-8")


@cache
def parser() -> Lark:
    """The lark parser for the netlist language (built once; tables cached on disk).

    Examples
    --------
    >>> print(parser().parse("let R = 2 ohm\\n").children[0].data)
    let_value
    """
    from lumped.cachedir import cache_folder

    options = {"parser": "lalr", "lexer": "contextual", "propagate_positions": True,
               "maybe_placeholders": False}
    folder = cache_folder("grammar")
    if folder is not None:
        try:
            # lark keys the cache file on the grammar text and options.
            return Lark(grammar_text(), cache=str(folder / "lumped.lark.cache"), **options)
        except Exception:
            pass
    return Lark(grammar_text(), **options)
