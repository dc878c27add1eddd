"""Figures: the measures a design review reads, stored energy and verdicts.

Receives closed forms (:class:`lumped.inversion.TimeResponse`) and the
requirements of the netlist; hands on immutable :class:`Figures` and
:class:`Verdict` records.
"""

from lumped.figures.measures import (
    EXTREME_TOLERANCE,
    Extremum,
    Figures,
    Verdict,
    compute_figures,
    energy_dissipated,
    in_g,
    judge,
)

__all__ = ["EXTREME_TOLERANCE", "Extremum", "Figures", "Verdict", "compute_figures",
           "energy_dissipated", "in_g", "judge"]
