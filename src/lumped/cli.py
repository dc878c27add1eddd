"""The `lumped` command: a thin shell over the library.

Exit status: 0 every requirement passes, 1 a requirement fails, 2 bad input
(nothing is written then), 3 an internal error.  Options become plain keyword
arguments of the library here; the library knows nothing of the command line.
"""

from __future__ import annotations

import argparse
import os
import sys
import textwrap
from pathlib import Path

from lumped.errors import LumpedError, NetlistError, ParametersNeeded

EXIT_PASS, EXIT_FAIL, EXIT_BAD_INPUT, EXIT_INTERNAL = 0, 1, 2, 3
EXIT_INTERRUPTED = 130  # as a shell reports a program ended by Ctrl-C

_DESCRIPTION = """\
Solve a lumped electrical or mechanical network exactly: read a netlist
(.lumped), build the s-domain equations with the initial conditions, invert
them in closed form, and report the figures of every watched quantity with a
pass/fail verdict for each requirement.

exit status: 0 all requirements pass, 1 a requirement fails (or cannot be
judged), 2 bad input (nothing is written), 3 an internal error."""

_EPILOG = """\
examples:
  lumped examples/switch_node_snubber.lumped
  lumped examples/crate_drop_foam.lumped --plot crate.png --json crate.json
  lumped --check my_filter.lumped
  lumped --syntax            # print the netlist language reference

Results describe an idealised linear lumped model. Applicable standards,
local codes, physical testing and licensed engineering review govern anything
that can hurt someone."""


def _arguments() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="lumped",
        description=_DESCRIPTION,
        epilog=_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("netlist", nargs="?", help="the netlist file (.lumped)")
    parser.add_argument("--check", action="store_true",
                        help="only read, validate and solve the netlist in s; print its summary")
    parser.add_argument("--json", metavar="FILE", help="write the results as JSON")
    parser.add_argument("--csv", metavar="FILE", help="write sampled waveforms as CSV")
    parser.add_argument("--plot", metavar="FILE", help="draw the waveforms (.png or .svg)")
    parser.add_argument("--latex", metavar="FILE", help="write the formulas as LaTeX")
    parser.add_argument("--set", action="append", default=[], metavar="NAME=VALUE",
                        help="give a parameter a value, e.g. --set R=4.7kohm or "
                        "--set 'R=2.2 kohm' (repeatable)")
    parser.add_argument("--transfer", action="append", default=[], metavar="SOURCE",
                        help="also print the transfer function from SOURCE to each watched "
                        "quantity: poles, zeros, DC gain, damping, stability (repeatable)")
    parser.add_argument("--samples", type=int, default=2001, metavar="N",
                        help="points per waveform in CSV and plots (default 2001)")
    parser.add_argument("--quiet", action="store_true", help="print only the verdicts")
    parser.add_argument("--color", choices=("auto", "always", "never"), default="auto",
                        help="colour in the report (default: only on a terminal)")
    parser.add_argument("--syntax", action="store_true",
                        help="print the netlist language reference and exit")
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns the exit status.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> path = pathlib.Path(tempfile.mkdtemp()) / "r.lumped"
    >>> _ = path.write_text("resistor R from a to ground 1 ohm\\n")
    >>> main(["--check", str(path)])  # doctest: +ELLIPSIS
    Network ...: 1 element, 1 node besides the references
    ...
    0
    """
    args = _arguments().parse_args(argv)
    try:
        return _run(args)
    except BaseException as error:  # the one place where errors become exit statuses
        return _failure(error, args.netlist)


def _failure(error: BaseException, netlist: str | None) -> int:
    """Say what went wrong on stderr and return the exit status for it."""
    if isinstance(error, NetlistError):  # also ValidationError and SolveError
        print(error.render(), file=sys.stderr)
        return EXIT_BAD_INPUT
    if isinstance(error, ParametersNeeded):
        settings = " ".join(f"--set {name}=VALUE" for name in
                            sorted(str(p) for p in error.parameters))
        print(f"{netlist}: {error}\nhint: give values on the command line: {settings}",
              file=sys.stderr)
        return EXIT_BAD_INPUT
    if isinstance(error, LumpedError):  # UnitError and the like: still the input's
        hint = getattr(error, "hint", "")
        print(f"{netlist}: {error}" + (f"\nhint: {hint}" if hint else ""), file=sys.stderr)
        return EXIT_BAD_INPUT
    if isinstance(error, KeyboardInterrupt):
        print("interrupted", file=sys.stderr)
        return EXIT_INTERRUPTED
    if not isinstance(error, Exception) or os.environ.get("LUMPED_DEBUG"):
        raise error  # SystemExit and the like pass; LUMPED_DEBUG shows the traceback
    print(f"lumped: internal error while working on {netlist}: "
          f"{type(error).__name__}: {error}\n"
          "this is a bug in lumped, not in your netlist; run with LUMPED_DEBUG=1 for "
          "details and report it with the netlist", file=sys.stderr)
    return EXIT_INTERNAL


def _run(args: argparse.Namespace) -> int:
    if args.syntax:
        from lumped.language.reference import language_reference

        print(language_reference())
        return EXIT_PASS
    if not args.netlist:
        print("lumped: name a netlist file, e.g. `lumped examples/switch_node_snubber.lumped`;"
              " see `lumped --help`", file=sys.stderr)
        return EXIT_BAD_INPUT
    from lumped.io.files import FEWEST_SAMPLES, MOST_SAMPLES, PLOT_SUFFIXES, check_outputs

    source = Path(args.netlist)
    outputs = [Path(p) for p in (args.json, args.csv, args.plot, args.latex) if p]
    if args.plot and Path(args.plot).suffix.lower() not in PLOT_SUFFIXES:
        raise NetlistError(f"--plot {args.plot}: the plot is written as .png or .svg",
                           hint="name the file with one of those endings")
    if not FEWEST_SAMPLES <= args.samples <= MOST_SAMPLES:
        raise NetlistError(f"--samples {args.samples}: give between {FEWEST_SAMPLES} and "
                           f"{MOST_SAMPLES} points",
                           hint="2001 (the default) is plenty for a plot")
    check_outputs(source, outputs)
    try:
        return _solve(args, source)
    except NetlistError as error:
        # A problem of the whole netlist (no line to point at) still names the file.
        if error.location is None and not error.message.startswith(str(source)):
            error.message = f"{source}: {error.message}"
        raise


def _solve(args: argparse.Namespace, source: Path) -> int:
    from lumped import api

    values = {}
    for setting in args.set:
        name, equals, value = setting.partition("=")
        if not equals or not name.strip():
            raise NetlistError(f"--set {setting!r} is not NAME=VALUE",
                               hint="e.g. --set R=4.7kohm")
        values[name.strip()] = value.strip()
    topology = api.load_topology(source, values)  # validated once, handed on
    netlist = topology.netlist
    if args.check:
        from lumped.io.summary import network_summary
        from lumped.network import assemble

        solution = assemble(topology)  # a network without a unique solution fails here too
        lines = [network_summary(netlist)]
        lines += [textwrap.fill(note, 80, initial_indent="  note: ", subsequent_indent=" " * 8)
                  for note in solution.notes]
        _print_report("\n".join(lines), ())
        return EXIT_PASS
    for name in args.transfer:
        element = netlist.element(name)
        if element is None or not element.kind.is_source:
            sources = ", ".join(e.name for e in netlist.elements if e.kind.is_source)
            raise NetlistError(f"--transfer {name}: there is no source of that name",
                               hint=f"the sources are: {sources or 'none'}")
    analysis = api.analyse(topology)
    from lumped import io

    for option in ("csv", "plot"):  # in the options' words, before anything is written
        if getattr(args, option):
            io.refuse_unsampled(analysis, f"--{option} {getattr(args, option)}")
    written = io.write(analysis, json=args.json, csv=args.csv, latex=args.latex,
                       plot=args.plot, samples=args.samples)
    report = io.render(analysis, color=_colour(args.color), quiet=args.quiet)
    for name in args.transfer:
        for result in analysis.results:
            function = analysis.solution.transfer_function(name, result.quantity)
            report += "\n\n" + io.transfer_text(function)
    _print_report(report, written)
    return EXIT_PASS if analysis.passed else EXIT_FAIL


def _colour(choice: str) -> bool:
    """--color: always, never, or auto (a terminal, unless NO_COLOR is set)."""
    return choice == "always" or (choice == "auto" and sys.stdout.isatty()
                                  and os.environ.get("NO_COLOR") is None)


def _print_report(report: str, written: tuple[Path, ...]) -> None:
    """Print what the run says; a reader that leaves early (``| head``) is no error."""
    try:
        print(report)
        for path in written:
            print(f"wrote {path}")
        sys.stdout.flush()
    except BrokenPipeError:
        # The reader (e.g. `head`) left early; the verdicts still decide the status.
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
