"""Inversion: an s-domain response to its closed form in time.

Receives a rational function of ``s`` (with delays ``exp(-a s)``, possibly
with free parameters) from the network stage; hands on an immutable
:class:`TimeResponse`: certified modes, impulses, the closed form in ``t``
and the one fast evaluator that figures, plots and outputs share.

Modules: :mod:`~lumped.inversion.inverse` (the entry point :func:`invert`, and
:func:`invert_ratios` for a transform already held as ratios over Q),
:mod:`~lumped.inversion.delays` (delay groups), :mod:`~lumped.inversion.residues`
(partial fractions and residues; certified roots and exact factors come from
:mod:`lumped.algebra.roots`), :mod:`~lumped.inversion.closed_form` (the result
types and their rendering to sympy), :mod:`~lumped.inversion.evaluator` (the
numeric evaluator).

Examples
--------
>>> import sympy
>>> from lumped.inversion import invert
>>> s = sympy.Symbol("s")
>>> invert(1 / (s * (s + 2)), s).expression
1/2 - exp(-2*t)/2
"""

from lumped.inversion.closed_form import DEFAULT_T, Impulse, Mode, TimeResponse
from lumped.inversion.inverse import invert, invert_ratios

__all__ = ["DEFAULT_T", "Impulse", "Mode", "TimeResponse", "invert", "invert_ratios"]
