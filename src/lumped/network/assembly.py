"""The network stage's entry point: plan, solve, equilibrium start, notes.

Examples
--------
>>> import sympy
>>> from lumped import model as m
>>> step = m.Waveform((m.WaveformTerm(m.Shape.STEP, sympy.Integer(1)),))
>>> net = m.Netlist("ex", "", elements=(
...     m.Element("V1", m.Kind.VOLTAGE_SOURCE, "in", "ground", None, waveform=step),
...     m.Element("R1", m.Kind.RESISTOR, "in", "out", sympy.Integer(1000)),
...     m.Element("C1", m.Kind.CAPACITOR, "out", "ground", sympy.Rational(1, 10**6)),
... ))
>>> assemble(net).response(m.Quantity(m.QuantityKind.VOLTAGE, "out", "at")).transform
1000/(s**2 + 1000*s)
"""

from __future__ import annotations

import sympy

from lumped.model import Netlist
from lumped.network.initial import initial_notes, static_values
from lumped.network.solution import Solution
from lumped.network.solve import Pencil
from lumped.network.sources import Piece
from lumped.network.stamps import plan_equations
from lumped.topology import Topology, check_solvable, validate


def assemble(network: Topology | Netlist) -> Solution:
    """Build the s-domain equations of a network and solve them exactly.

    Parameters
    ----------
    network : Topology or Netlist
        A validated network (:func:`lumped.topology.validate`), or a netlist,
        which is validated here.  Exact SI values; free parameters as sympy
        symbols.

    Returns
    -------
    Solution
        Ask it for :meth:`Solution.response` and :meth:`Solution.transfer_function`.

    Raises
    ------
    SolveError
        When the equations have no unique solution (a loop of across
        sources, a node held only by through sources, ...); the message names
        the elements and the error points at the first.
    ValidationError
        For a netlist that fails the other checks of :func:`lumped.topology.validate`.

    Examples
    --------
    >>> import sympy
    >>> from lumped import model as m
    >>> net = m.Netlist("ex", "", elements=(
    ...     m.Element("L1", m.Kind.INDUCTOR, "a", "ground", sympy.Integer(2),
    ...               initial=sympy.Integer(3)),
    ...     m.Element("R1", m.Kind.RESISTOR, "a", "ground", sympy.Integer(4)),))
    >>> assemble(net).response(m.Quantity(m.QuantityKind.CURRENT, "L1", "in")).transform
    3/(s + 2)
    """
    if isinstance(network, Netlist):
        # The solver's own words come first for a network built in Python: what
        # makes the equations singular, by element, rather than the text checks.
        check_solvable(network)
        network = validate(network)
    plan = plan_equations(network)
    # The matrix does not depend on the excitations: one pencil serves the solution
    # before and after the equilibrium values are known.
    pencil = Pencil(plan)
    solution = Solution(plan, pencil)
    notes = list(plan.notes)
    extra: dict[str, sympy.Expr] = {}
    if plan.equilibrium:
        extra = dict(static_values(solution))
        pieces = {plan.equilibrium_inputs[name]: (Piece(value, sympy.Integer(1), sympy.Integer(0)),)
                  for name, value in extra.items() if value != 0}
        plan = plan.with_pieces(pieces)
        netlist = network.netlist
        for name, value in extra.items():
            element = netlist.element(name)
            if (
                element is not None
                and element.initial is not None
                and element.initial != 0
                and value != 0
            ):
                notes.append(
                    f"the initial value written for {name} is taken on top of its equilibrium value"
                )
    notes.extend(initial_notes(plan, extra))
    return Solution(plan, pencil, tuple(notes))
