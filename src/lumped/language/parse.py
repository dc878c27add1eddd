"""The entry points: netlist text (or a file) in, checked model out.

Text passes four steps, each in its own module: :mod:`~lumped.language.prepare`
(decoding and text-level checks), the grammar (:mod:`~lumped.language.grammar`,
errors worded by :mod:`~lumped.language.diagnostics`),
:mod:`~lumped.language.transform` (parse tree to typed statements) and
:mod:`~lumped.language.build` (statements to :class:`lumped.model.Netlist`).
Every problem ends as a :class:`~lumped.errors.NetlistError` carrying the text
of its line.
"""

from __future__ import annotations

from collections.abc import Mapping
from pathlib import Path
from types import MappingProxyType

from lark.exceptions import UnexpectedInput, VisitError

from lumped import model as m
from lumped.errors import Location, NetlistError
from lumped.language.build import Override, build_netlist
from lumped.language.diagnostics import error_from_lark
from lumped.language.grammar import FILE_EXTENSION, parser
from lumped.language.prepare import prepare_text
from lumped.language.syntax import LetValue
from lumped.language.transform import statements_from_tree
from lumped.language.values import example_value

# The package (``lumped.language``) is where these are public; ``example_value`` is
# importable from here as well, where other stages import it from.
__all__ = ["example_value", "load_file", "parse_text"]


def _override_expressions(values: Mapping[str, str]) -> Mapping[str, Override]:
    """Parse ``NAME=VALUE`` settings given outside the netlist with the same grammar."""
    parsed: dict[str, Override] = {}
    for name, value in values.items():
        source = f"--set {name}"
        line = f"let {name} = {value}"
        where = Location(source, 1, len(line) - len(value) + 1, max(1, len(value)))
        if "\n" in value or "#" in value:
            raise NetlistError("a value must be one expression on one line", where,
                               hint="e.g. --set R=4.7kohm or --set R='2 * 2.2 kohm'",
                               line_text=line)
        try:
            tree = parser().parse(line + "\n")
            statements = statements_from_tree(tree, source)
        except UnexpectedInput as error:
            raise error_from_lark(error, line + "\n", source) from None
        except VisitError as error:
            raise NetlistError("cannot read this value", where, line_text=line) from error
        except NetlistError as error:
            raise error.with_text(line) from None
        if len(statements) != 1 or not isinstance(statements[0], LetValue):
            raise NetlistError("cannot read this value", where,
                               hint="write NAME=VALUE, e.g. R=4.7kohm", line_text=line)
        parsed[name] = Override(statements[0].value, where, line)
    return MappingProxyType(parsed)


def parse_text(text: str | bytes, source: str = "<text>",
               values: Mapping[str, str] | None = None) -> m.Netlist:
    """Parse netlist text into a model (syntax, units and values checked).

    Parameters
    ----------
    text : str or bytes
        The netlist.  Bytes are decoded as UTF-8 (a byte-order mark is skipped).
    source : str
        Name used in messages, usually the file name.
    values : mapping of str to str, optional
        Values for parameters, written as in the netlist (``{"R": "4.7 kohm"}``);
        they give free parameters a value or replace a ``let`` value.

    Returns
    -------
    Netlist
        The model; topology is checked separately by :func:`lumped.topology.validate`.

    Raises
    ------
    NetlistError
        For any problem in the text, with its location.

    Examples
    --------
    >>> net = parse_text("resistor R1 from a to ground 2.2 kohm\\n")
    >>> net.elements[0].value
    2200
    """
    prepared = prepare_text(text, source)
    if not prepared.strip():
        raise NetlistError(f"{source} is empty",
                           hint="write the network one statement a line, e.g. `resistor R1 "
                           "from a to ground 1 kohm`; `lumped --syntax` shows the language")
    try:
        tree = parser().parse(prepared)
    except UnexpectedInput as error:
        raise error_from_lark(error, prepared, source) from None
    try:
        try:
            statements = statements_from_tree(tree, source)
        except VisitError as error:
            # lark wraps what goes wrong inside a transformer callback.
            raise error.orig_exc from None
        overrides = _override_expressions(values) if values else None
        return build_netlist(statements, source, prepared, overrides)
    except NetlistError as error:
        where = error.location.source if error.location is not None else source
        name = where.removeprefix("--set ")
        if values and where != source and name in values:
            raise error.with_text(f"let {name} = {values[name]}") from None  # a --set value
        raise error.with_text(prepared) from None
    except RecursionError:
        raise NetlistError(
            "the expression is nested too deeply", Location(source, 1, 1),
            hint="name parts of the expression with let",
        ) from None


def load_file(path: str | Path, values: Mapping[str, str] | None = None) -> m.Netlist:
    """Read a netlist file and parse it.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "rc.lumped"
    >>> _ = p.write_text("resistor R from a to ground 1 kohm\\n")
    >>> load_file(p).elements[0].name
    'R'
    """
    path = Path(path)
    try:
        data = path.read_bytes()
    except FileNotFoundError:
        raise NetlistError(f"no such file: {path}", hint="check the path") from None
    except IsADirectoryError:
        raise NetlistError(f"{path} is a folder, not a netlist file",
                           hint=f"name a {FILE_EXTENSION} file") from None
    except OSError as exc:
        raise NetlistError(f"cannot read {path}: {exc.strerror}", hint="check the path") from None
    return parse_text(data, str(path), values)
