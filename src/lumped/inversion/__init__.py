"""Inversion: an s-domain response to its closed form in time.

Receives a rational function of ``s`` (with delays ``exp(-a s)``) from the
network stage; hands on a :class:`TimeResponse`: certified modes, impulses and
one fast evaluator that figures, plots and outputs share.
"""

from lumped.inversion.closed_form import DEFAULT_T, Impulse, Mode, TimeResponse, invert

__all__ = ["DEFAULT_T", "Impulse", "Mode", "TimeResponse", "invert"]
