"""The library's front door: load a netlist and analyse it.

Outputs (the report, JSON, CSV, LaTeX, plot) are :mod:`lumped.io`'s:
``lumped.io.render(analysis)`` and ``lumped.io.write(analysis, json=...)``.

Examples
--------
>>> from lumped.api import loads
>>> net = loads("resistor R from a to ground 1 kohm\\n"
...             "capacitor C from a to ground 1 uF, initially 5 V\\n")
>>> [e.name for e in net.elements]
['R', 'C']
"""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

from lumped import model as m
from lumped.language.parse import load_file, parse_text
from lumped.topology import Topology, validate

if TYPE_CHECKING:
    from lumped.analysis import Analysis


def loads(text: str, source: str = "<text>", values: dict[str, str] | None = None) -> m.Netlist:
    """Parse and validate netlist text.

    Examples
    --------
    >>> loads("resistor R from a to ground 1 ohm\\n").elements[0].value
    1
    """
    netlist = parse_text(text, source, values)
    validate(netlist)
    return netlist


def load(path: str | Path, values: dict[str, str] | None = None) -> m.Netlist:
    """Read, parse and validate a netlist file.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "r.lumped"
    >>> _ = p.write_text("resistor R from a to ground 1 ohm\\n")
    >>> load(p).elements[0].kind.word
    'resistor'
    """
    return load_topology(path, values).netlist


def load_topology(path: str | Path, values: dict[str, str] | None = None) -> Topology:
    """Read, parse and validate a netlist file; return the validated network.

    Hand the result to :func:`analyse` so that it is not validated twice.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "r.lumped"
    >>> _ = p.write_text("resistor R from a to ground 1 ohm\\n")
    >>> load_topology(p).domains["a"].value
    'electrical'
    """
    return validate(load_file(path, values))


def analyse(netlist: m.Netlist | Topology) -> Analysis:
    """Solve the netlist and compute every watched quantity's response and figures.

    A :class:`~lumped.topology.Topology` from :func:`load_topology` is not validated again.

    Examples
    --------
    >>> analysis = analyse(loads("current source I at a step 1 mA\\n"
    ...                          "resistor R from a to ground 1 kohm\\n"))
    >>> round(analysis.result("voltage at a").figures.final, 9)
    1.0
    """
    # The solving stages load on first use, so that loading alone stays quick.
    from lumped.analysis import analyse as _analyse

    return _analyse(netlist)
