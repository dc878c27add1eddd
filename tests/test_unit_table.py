"""The precomputed unit table against pint, the reference it is made from.

pint's registry (its definitions file) is the reference: every word of the
table must have the exact factor that walking pint's definitions gives, the
float pint itself converts to base units, and pint's dimensions.  A few
factors are also checked against their published definitions.
"""

from __future__ import annotations

import importlib.util
from fractions import Fraction
from pathlib import Path

import pytest
import sympy

from lumped.errors import UnitError
from lumped.language.unit_table import UNIT_TABLE
from lumped.language.units import _atom, atom_from_registry, parse_unit, registry

SCRIPT = Path(__file__).resolve().parents[1] / "scripts" / "make_unit_table.py"
# The symbols the language accepts that pint spells out (as units.py maps them).
PINT_SPELLING = {"%": "percent", "°": "degree"}


def _script():
    spec = importlib.util.spec_from_file_location("make_unit_table", SCRIPT)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def _table_factor(word: str) -> sympy.Expr:
    numerator, denominator, pi_power, _ = UNIT_TABLE[word]
    return sympy.Rational(numerator, denominator) * sympy.pi**pi_power


@pytest.mark.parametrize("word", sorted(UNIT_TABLE))
def test_every_table_word_agrees_with_pint(word):
    ureg = registry()
    factor, dims = atom_from_registry(word)
    assert _table_factor(word) == factor
    assert UNIT_TABLE[word][3] == dims
    # pint's own conversion, in floating point, independent of the exact walk.
    quantity = (1 * ureg.Unit(PINT_SPELLING.get(word, word))).to_base_units()
    magnitude = float(quantity.magnitude)
    assert float(_table_factor(word)) == pytest.approx(magnitude, rel=1e-14, abs=0)
    pint_dims = tuple(sorted((str(k), int(v)) for k, v in quantity.dimensionality.items() if v))
    assert UNIT_TABLE[word][3] == pint_dims
    # What parse_unit hands on for the word is the table's entry.
    assert _atom(word) == (_table_factor(word), UNIT_TABLE[word][3])


def test_the_table_holds_every_word_of_its_vocabulary_that_pint_reads():
    # Regenerated from the installed pint, the table is the same: it is up to date.
    assert _script().entries() == UNIT_TABLE
    assert len(UNIT_TABLE) > 200


@pytest.mark.parametrize("word", ["degC", "rev", "kohmz"])
def test_words_outside_the_table_are_asked_of_pint_and_refused_as_before(word):
    # degC is an offset unit (no factor), the others are no unit to pint.
    assert word not in UNIT_TABLE
    with pytest.raises(KeyError):
        atom_from_registry(word)
    with pytest.raises(UnitError, match=f"unknown unit '{word}'"):
        parse_unit(word)


@pytest.mark.parametrize(("unit", "exact"), [
    # Published definitions (NIST SP 811, appendix B; from memory):
    ("in", Fraction("0.0254")),                         # inch, exactly
    ("ft", Fraction("0.3048")),                         # foot, exactly
    ("lb", Fraction("0.45359237")),                     # avoirdupois pound, exactly
    ("lbf", Fraction("4.4482216152605")),               # pound-force = lb * 9.80665 m/s^2
    ("kgf", Fraction("9.80665")),                       # kilogram-force
    ("lbf/in", Fraction("4.4482216152605") / Fraction("0.0254")),
    ("min", Fraction(60)),
    ("h", Fraction(3600)),
    ("%", Fraction(1, 100)),
    ("uF", Fraction(1, 10**6)),
    ("kohm", Fraction(1000)),
    ("mm", Fraction(1, 1000)),
    ("g", Fraction(1, 1000)),                           # a gram in kilograms
])
def test_table_factors_match_published_definitions(unit, exact):
    factor, _ = parse_unit(unit)
    assert factor == sympy.Rational(exact.numerator, exact.denominator)


@pytest.mark.parametrize(("unit", "exact"), [
    ("deg", sympy.pi / 180),       # a degree is pi/180 rad (SI brochure, table 8)
    ("°", sympy.pi / 180),
    ("rpm", 2 * sympy.pi / 60),    # one revolution (2 pi rad) per minute
    ("turn", 2 * sympy.pi),
])
def test_angles_keep_pi_exact(unit, exact):
    assert parse_unit(unit)[0] == exact
