"""Analysis: the run that ties the stages together for one netlist.

Receives a :class:`lumped.model.Netlist`; validates it once, solves it in s,
inverts every watched quantity, measures and judges it, and adds drops,
dissipation and cautions.  Hands on an immutable :class:`Analysis`.
"""

from lumped.analysis.run import (
    Analysis,
    Dissipation,
    DropResult,
    QuantityResult,
    analyse,
)

__all__ = ["Analysis", "Dissipation", "DropResult", "QuantityResult", "analyse"]
