"""Figures: the measures a design review reads, stored energy and verdicts.

Receives closed forms (:class:`lumped.inversion.TimeResponse`, or any object
with ``modes``, ``impulses`` and ``evaluate(times, derivative=0)``) and the
requirements of the netlist; hands on immutable :class:`Figures` and
:class:`Verdict` records.

Modules: :mod:`~lumped.figures.measures` (:func:`compute_figures` and the
definitions of the figures), :mod:`~lumped.figures.modes` (what the modes
alone tell), :mod:`~lumped.figures.sampling` (the adapted grid and the
refinement on the closed form), :mod:`~lumped.figures.energy`
(:func:`energy_dissipated`), :mod:`~lumped.figures.verdicts` (:func:`judge`),
:mod:`~lumped.figures.records` (the records).

Examples
--------
>>> import sympy
>>> from lumped.figures import compute_figures
>>> from lumped.inversion import invert
>>> s = sympy.Symbol("s")
>>> figures = compute_figures(invert(1 / (s * (s + 1)), s), 0.0, 10.0)
>>> round(figures.final, 9), round(figures.rise_time, 6)  # 10-90 % of 1 - e^-t: ln 9
(1.0, 2.197225)
"""

from lumped.figures.energy import energy_dissipated
from lumped.figures.measures import EXTREME_TOLERANCE, compute_figures, in_g
from lumped.figures.records import Extremum, Figures
from lumped.figures.verdicts import Verdict, judge

__all__ = ["EXTREME_TOLERANCE", "Extremum", "Figures", "Verdict", "compute_figures",
           "energy_dissipated", "in_g", "judge"]
