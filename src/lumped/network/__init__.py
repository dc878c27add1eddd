"""Network: the exact solution of a validated network in the Laplace domain.

Receives a :class:`lumped.topology.Topology` (or a netlist, validated on the
way in); stamps every element by its role (:mod:`~lumped.network.stamps`),
solves the pencil ``A0 + s A1`` exactly (:mod:`~lumped.network.solve`): the
excitations that start together as one right-hand side, over the network's
one characteristic polynomial; starts from equilibrium under gravity and
notes impulses at ``t = 0`` (:mod:`~lumped.network.initial`).  Hands on an
immutable :class:`Solution`, which gives any quantity as a :class:`Response`
(its transform, split into :class:`Contribution` by excitation) and any
source-to-quantity :class:`TransferFunction` with its poles, zeros,
:class:`SecondOrderFactor` and stability.  Source waveforms' transforms are in
:mod:`~lumped.network.sources`.
"""

from lumped.network.assembly import assemble
from lumped.network.solution import Contribution, Response, Solution
from lumped.network.transfer import SecondOrderFactor, TransferFunction

__all__ = [
    "Contribution",
    "Response",
    "SecondOrderFactor",
    "Solution",
    "TransferFunction",
    "assemble",
]
