"""Constants and symbols every stage shares, each defined here and nowhere else.

Examples
--------
>>> from lumped.constants import STANDARD_GRAVITY, STANDARD_GRAVITY_SI, s
>>> STANDARD_GRAVITY, STANDARD_GRAVITY_SI
(196133/20000, 9.80665)
>>> s
s
"""

from __future__ import annotations

import sympy

#: Standard acceleration of gravity in m/s², exact by definition (CGPM 1901).
STANDARD_GRAVITY = sympy.Rational(980665, 100000)
#: The same as a float, for figures and reports.
STANDARD_GRAVITY_SI = float(STANDARD_GRAVITY)

#: The Laplace variable of every s-domain expression.
s = sympy.Symbol("s")
#: The time symbol of closed forms.
t = sympy.Symbol("t", real=True)

__all__ = ["STANDARD_GRAVITY", "STANDARD_GRAVITY_SI", "s", "t"]
