"""The library's front door: load, analyse, and write outputs.

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

from lumped import model as m
from lumped.errors import NetlistError
from lumped.language.parse import load_file, parse_text
from lumped.topology import Topology, validate


def loads(text: str, source: str = "<text>", values: dict[str, str] | None = None) -> m.Netlist:
    """Parse and validate netlist text.

    Examples
    --------
    >>> loads("resistor R from a to ground 1 ohm\\n").elements[0].value
    1
    """
    return validate(parse_text(text, source, values)).netlist


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


def check_outputs(source: Path, outputs: list[Path]) -> None:
    """Refuse outputs that would overwrite the input or each other, or land nowhere."""
    seen: set[Path] = set()
    try:
        source_resolved = source.resolve()
    except OSError:
        source_resolved = source
    for output in outputs:
        resolved = output.resolve()
        if resolved == source_resolved:
            raise NetlistError(f"refusing to overwrite the input file {source}",
                               hint="name a different output file")
        if resolved.suffix == source.suffix and source.suffix == ".lumped":
            raise NetlistError(f"refusing to write results into a netlist file ({output})",
                               hint="name outputs .json, .csv, .png, .svg or .tex")
        if resolved in seen:
            raise NetlistError(f"two outputs are both {output}", hint="give each its own file")
        seen.add(resolved)
        if resolved.is_dir():
            raise NetlistError(f"{output} is a folder", hint="name a file to write")
        if not resolved.parent.is_dir():
            raise NetlistError(f"the folder for {output} does not exist",
                               hint="create it first or name another place")


def analyse(network: m.Netlist | Topology):
    """Solve a netlist (or a validated Topology) and compute every watched quantity's results."""
    from lumped.analysis import analyse as _analyse

    return _analyse(network)


def emit(analysis, args) -> int:
    """Print the report and write the requested outputs; return the exit status."""
    from lumped.io.outputs import emit as _emit

    return _emit(analysis, args)
