"""Each quantity solved and inverted once per analysis, whoever asks for it.

The watched quantities, the dissipators' currents and forces, the voltages of
the hazard check and the drops' motions often name the same quantity; the
analysis asks this record, which solves and inverts a quantity the first time
and hands back the same result afterwards.

Examples
--------
>>> from lumped import model as m
>>> from lumped.api import loads
>>> from lumped.analysis import analyse
>>> net = loads("current source I at a step 1 mA\\nresistor R from a to ground 1 kohm\\n")
>>> responses = Responses(analyse(net).solution)
>>> first = responses.time(m.Quantity(m.QuantityKind.VOLTAGE, "a", "at"))
>>> first is responses.time(m.Quantity(m.QuantityKind.VOLTAGE, "a", "at"))
True
"""

from __future__ import annotations

from lumped import model as m
from lumped.constants import s
from lumped.errors import ParametersNeeded
from lumped.inversion import TimeResponse, invert, invert_ratios
from lumped.network import Response, Solution


class Responses:
    """The s-domain response and closed form of each quantity, keyed by its label.

    A quantity's label (``voltage at b``) names it fully, so two requests with
    the same label get the same objects; a response that needs parameter values
    raises the same :class:`~lumped.errors.ParametersNeeded` each time.

    Parameters
    ----------
    solution : Solution
        The network's exact solution in s.
    """

    def __init__(self, solution: Solution) -> None:
        self.solution = solution
        self._responses: dict[str, Response] = {}
        self._times: dict[str, TimeResponse | ParametersNeeded] = {}

    def response(self, quantity: m.Quantity) -> Response:
        """The quantity's transform, split by excitation (solved once)."""
        label = quantity.label
        if label not in self._responses:
            self._responses[label] = self.solution.response(quantity)
        return self._responses[label]

    def time(self, quantity: m.Quantity) -> TimeResponse:
        """The quantity's closed form in time (inverted once).

        Raises
        ------
        ParametersNeeded
            When the inversion needs values for free parameters.
        """
        label = quantity.label
        if label not in self._times:
            response = self.response(quantity)
            try:
                if response.ratios is not None:
                    # The network's own polynomials: nothing to read back from the expression.
                    self._times[label] = invert_ratios(response.transform, s, response.ratios)
                else:
                    # invert makes irrational numbers rational
                    self._times[label] = invert(response.transform, s)
            except ParametersNeeded as needed:
                self._times[label] = needed
        found = self._times[label]
        if isinstance(found, ParametersNeeded):
            raise found
        return found
