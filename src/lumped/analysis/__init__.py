"""Analysis: the run that ties the stages together for one netlist.

Receives a :class:`lumped.model.Netlist`; validates it once, solves it in s,
inverts every watched quantity (each quantity once, shared by the watches, the
energies, the drops and the hazard checks), measures and judges it, and adds
drops, dissipation and cautions.  Hands on an immutable :class:`Analysis`.

Modules: ``run`` (analyse and its results), ``responses`` (each quantity solved
and inverted once), ``window`` (the automatic window and the ringing limit),
``energy`` (dissipation and stored energy), ``drops``, ``cautions``.
"""

from lumped.analysis.drops import DropResult
from lumped.analysis.energy import Dissipation
from lumped.analysis.run import Analysis, QuantityResult, analyse

__all__ = ["Analysis", "Dissipation", "DropResult", "QuantityResult", "analyse"]
