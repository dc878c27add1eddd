"""Outputs of an analysis: the printed report, JSON, CSV, plot and LaTeX.

Every file is written atomically: into a temporary file in the same folder,
then renamed over the target, so a reader never sees half a file and a failed
run leaves nothing behind.
"""

from __future__ import annotations

import csv
import io
import json
import math
import os
import sys
import tempfile
from pathlib import Path

import numpy as np
import sympy
from sympy.printing.latex import LatexPrinter

from lumped import __version__
from lumped import model as m
from lumped.errors import NetlistError
from lumped.figures import in_g
from lumped.io.text import engineering, numeric, render

JSON_SCHEMA_VERSION = 1


def write_atomically(path: Path, data: str | bytes) -> None:
    """Write ``data`` to ``path`` through a temporary file and a rename.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "out.txt"
    >>> write_atomically(p, "hello")
    >>> p.read_text()
    'hello'
    """
    os.replace(_write_temporary(Path(path), data), path)


def write_all(files: list[tuple[Path, str | bytes]]) -> None:
    """Write several files so that either all of them land or none is touched."""
    staged: list[tuple[str, Path]] = []
    try:
        for path, data in files:
            staged.append((_write_temporary(path, data), path))
    except OSError as error:
        for temporary, _ in staged:
            Path(temporary).unlink(missing_ok=True)
        raise NetlistError(f"cannot write {path}: {error.strerror or error}",
                           hint="check the folder exists and is writable, and the disk has room"
                           ) from None
    for temporary, path in staged:
        os.replace(temporary, path)


def _write_temporary(path: Path, data: str | bytes) -> str:
    """``data`` in a temporary file beside ``path``; returns the temporary's name."""
    binary = isinstance(data, bytes)
    handle, temporary = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".part")
    try:
        with os.fdopen(handle, "wb" if binary else "w", **({} if binary else
                                                           {"encoding": "utf-8",
                                                            "newline": ""})) as stream:
            stream.write(data)
        # mkstemp makes the file private; give it the permissions a plain open() would.
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(temporary, 0o666 & ~umask)
    except BaseException:
        Path(temporary).unlink(missing_ok=True)
        raise
    return temporary


def sample_times(analysis, count: int) -> np.ndarray:
    return np.linspace(analysis.start, analysis.stop, max(2, count))


def _samples(analysis, count: int) -> tuple[np.ndarray, list[tuple[str, str, np.ndarray]]]:
    times = sample_times(analysis, count)
    columns = []
    for result in analysis.results:
        if result.time is None or result.time.parameters:
            continue
        columns.append((result.quantity.label, result.unit, result.time.evaluate(times)))
    return times, columns


def to_csv(analysis, count: int = 2001) -> str:
    """Sampled waveforms: a time column, then one column per quantity, units in the header.

    Raises
    ------
    NetlistError
        When a watched response depends on a parameter without a value.
    """
    _refuse_unsampled(analysis, "CSV samples")
    times, columns = _samples(analysis, count)
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(["time [s]", *[f"{label} [{unit}]" for label, unit, _ in columns]])
    for row in range(len(times)):
        writer.writerow([repr(float(times[row])), *[repr(float(c[2][row])) for c in columns]])
    return buffer.getvalue()


def _number(value) -> float | None:
    if value is None:
        return None
    value = float(value)
    return value if math.isfinite(value) else None


def _figures_json(result) -> dict:
    figs = result.figures
    unit = result.unit

    def quantity(value, unit_):
        return None if value is None else {"value": _number(value), "unit": unit_}

    def extremum(item):
        if item is None:
            return None
        return {"value": _number(item.value), "time": _number(item.time), "unit": unit}

    return {
        "initial": quantity(figs.initial, unit),
        "final": quantity(figs.final, unit),
        "peak": extremum(figs.peak),
        "minimum": extremum(figs.minimum),
        "peak_magnitude": extremum(figs.magnitude),
        "overshoot": quantity(figs.overshoot, "fraction"),
        "undershoot": quantity(figs.undershoot, "fraction"),
        "rise_time": quantity(figs.rise_time, "s"),
        "settling_time": quantity(figs.settling_time, "s"),
        "settling_band": quantity(figs.band, "fraction"),
        "time_constant": quantity(figs.time_constant, "s"),
        "natural_frequency": quantity(figs.natural_frequency, "rad/s"),
        "damping_ratio": quantity(figs.damping_ratio, ""),
        "ringing_frequency": quantity(figs.ringing_frequency_hz, "Hz"),
        "peak_g": quantity(figs.peak_g, "g"),
        "minimum_g": quantity(figs.minimum_g, "g"),
        "max_travel": quantity(figs.max_travel, unit),
        "shape": figs.shape,
        "extreme_tolerance": quantity(figs.extreme_tolerance, "fraction of the largest |x|"),
        "reasons": dict(figs.reasons),
    }


def _modes_json(time) -> list[dict]:
    modes = []
    for mode in time.modes:
        modes.append({
            "pole": [mode.pole.real, mode.pole.imag],
            "conjugate_pair": bool(mode.is_pair),
            "multiplicity": int(mode.multiplicity),
            "delay": float(mode.delay),
            "time_constant": mode.time_constant,
            "natural_frequency": mode.natural_frequency,
            "damping_ratio": mode.damping_ratio,
        })
    return modes


def to_json(analysis) -> str:
    """The results as JSON; the schema is described in docs/outputs.md."""
    quantities = []
    for result in analysis.results:
        entry = {
            "label": result.quantity.label,
            "kind": result.quantity.kind.word,
            "target": result.quantity.target,
            "unit": result.unit,
            "s_domain": str(result.response.transform),
            "zero_state": str(result.response.zero_state),
            "zero_input": str(result.response.zero_input),
            "time_domain": None,
            "amplitude_phase": None,
            "valid_for": "t >= 0",
            "modes": [],
            "impulses": [],
            "figures": None,
            "problem": result.problem,
        }
        if result.time is not None:
            entry["time_domain"] = str(result.time.expression)
            try:
                entry["amplitude_phase"] = str(result.time.amplitude_phase())
            except Exception:
                entry["amplitude_phase"] = None
            entry["modes"] = _modes_json(result.time)
            entry["impulses"] = [
                {"order": i.order, "weight": _number(complex(i.weight).real),
                 "delay": _number(i.delay)} for i in result.time.impulses
            ]
        if result.figures is not None:
            entry["figures"] = _figures_json(result)
        quantities.append(entry)
    requirements = []
    for verdict in analysis.verdicts:
        requirement = verdict.requirement
        requirements.append({
            "line": requirement.location.line if requirement.location else None,
            "figure": requirement.figure.value,
            "quantity": requirement.quantity.label,
            "unit": "fraction" if requirement.unit == "%" else requirement.unit,
            "lower": _number(verdict.lower),
            "upper": _number(verdict.upper),
            "value": _number(verdict.value),
            "passed": verdict.passed,
            "margin": _number(verdict.margin),
            "reason": verdict.reason,
        })
    document = {
        "schema": JSON_SCHEMA_VERSION,
        "tool": f"lumped {__version__}",
        "netlist": analysis.netlist.source,
        "window": {"start": analysis.start, "stop": analysis.stop, "unit": "s",
                   "chosen_by_tool": analysis.window_chosen,
                   "rule": getattr(analysis, "window_rule", "") or None},
        "passed": analysis.passed,
        "quantities": quantities,
        "requirements": requirements,
        "dissipated_energy": [{"element": d.element, "energy": _number(d.energy), "unit": "J"}
                              for d in analysis.dissipation],
        "stored_energy_at_start": None if analysis.stored_energy is None
        else {"value": analysis.stored_energy, "unit": "J"},
        "drops": [{
            "mass": d.mass, "height": d.height, "contact_velocity": d.contact_velocity,
            "falling": list(d.falling),
            "max_compression": _number(d.max_compression),
            "compression_time": _number(d.compression_time),
            "peak_deceleration": _number(d.peak_deceleration),
            "peak_deceleration_g": _number(in_g(d.peak_deceleration))
            if d.peak_deceleration is not None else None,
            "deceleration_time": _number(d.deceleration_time),
            "separation_time": _number(d.separation_time),
            "rebound_velocity": _number(d.rebound_velocity),
        } for d in analysis.drops],
        "notes": list(analysis.notes),
        "cautions": list(analysis.cautions),
    }
    return json.dumps(document, indent=2, allow_nan=False) + "\n"


class _ShortLatex(LatexPrinter):
    """LaTeX with every number to six significant figures."""

    def _print_Float(self, expr) -> str:  # noqa: N802 - sympy's printer protocol
        text = f"{float(expr):.6g}"
        if "e" in text:
            mantissa, exponent = text.split("e")
            return rf"{mantissa} \cdot 10^{{{int(exponent)}}}"
        return text


def _latex(expr: sympy.Expr) -> str:
    return _ShortLatex().doprint(numeric(expr, 6))


def to_latex(analysis) -> str:
    """The formulas as a LaTeX fragment (numbers to 6 significant figures)."""
    lines = [f"% lumped {__version__}: {analysis.netlist.source}"]
    for result in analysis.results:
        lines.append(f"% {result.quantity.label} [{result.unit}]")
        lines.append(r"\[ X(s) = " + _latex(result.response.transform) + r" \]")
        if result.time is not None:
            lines.append(r"\[ x(t) = " + _latex(result.time.expression)
                         + r", \quad t \ge 0 \]")
    return "\n".join(lines) + "\n"


# ---------------------------------------------------------------------------
# Plot

_TIME_SCALES = [(1e-9, "ns"), (1e-6, "µs"), (1e-3, "ms"), (1.0, "s")]


def _scale(values: np.ndarray, unit: str) -> tuple[float, str]:
    peak = float(np.max(np.abs(values))) if values.size else 0.0
    text = engineering(peak, unit) if peak else f"0 {unit}"
    # Reuse the prefix chosen for the largest value.
    number, _, shown = text.partition(" ")
    try:
        factor = peak / float(number) if float(number) else 1.0
    except ValueError:
        factor = 1.0
    return (factor or 1.0), shown


def _identifier(text: str) -> str:
    """A label as an SVG id: letters, digits and hyphens."""
    return "".join(c if c.isalnum() else "-" for c in text)


def plot(analysis, path: Path, count: int = 2001) -> bytes:
    """Draw one panel per unit; requirement limits dashed, extremes and settling marked.

    Raises
    ------
    NetlistError
        When a watched response depends on a parameter without a value.
    """
    _refuse_unsampled(analysis, "a plot")
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    times, columns = _samples(analysis, count)
    units = list(dict.fromkeys(unit for _, unit, _ in columns))
    fig, axes = plt.subplots(max(1, len(units)), 1, sharex=True,
                             figsize=(8, 2.6 * max(1, len(units))), squeeze=False)
    span = analysis.stop
    tfactor, tname = next(((f, n) for f, n in _TIME_SCALES if span < 1000 * f), (1.0, "s"))
    for axis, unit in zip(axes[:, 0], units, strict=False):
        data = [(label, values) for label, u, values in columns if u == unit]
        factor, shown = _scale(np.concatenate([v for _, v in data]), unit)
        for label, values in data:
            line, = axis.plot(times / tfactor, values / factor, label=label, linewidth=1.4)
            result = analysis.result(label)
            figs = result.figures
            # Both extremes, each where it is first reached: peak ▼, minimum ▲.
            for extremum, marker, name in ((None if figs is None else figs.peak, "v", "peak"),
                                           (None if figs is None else figs.minimum, "^",
                                            "minimum")):
                if extremum is not None:
                    mark, = axis.plot(extremum.time / tfactor, extremum.value / factor, marker,
                                      color=line.get_color(), markersize=6)
                    mark.set_gid(f"{name}-{_identifier(label)}")
            if figs is not None and figs.settling_time:
                axis.axvline(figs.settling_time / tfactor, color=line.get_color(),
                             linestyle=":", linewidth=1)
        for verdict in analysis.verdicts:
            requirement = verdict.requirement
            if requirement.unit != unit or requirement.figure in (
                    m.Figure.RISE_TIME, m.Figure.SETTLING_TIME):
                continue
            for bound in (verdict.lower, verdict.upper):
                if bound is not None:
                    axis.axhline(bound / factor, color="red" if verdict.passed is False
                                 else "gray", linestyle="--", linewidth=1)
                    if requirement.figure is m.Figure.MAGNITUDE:
                        axis.axhline(-bound / factor, color="gray", linestyle="--", linewidth=1)
        for drop in analysis.drops:
            if drop.separation_time is not None:
                axis.axvline(drop.separation_time / tfactor, color="red", linestyle="-.",
                             linewidth=1, label=f"{drop.mass} leaves the surface")
        axis.set_ylabel(f"[{shown}]")
        axis.grid(True, alpha=0.3)
        axis.legend(loc="best", fontsize=8)
    axes[-1, 0].set_xlabel(f"time [{tname}]")
    axes[0, 0].set_title(Path(analysis.netlist.source).name, fontsize=10)
    fig.tight_layout()
    buffer = io.BytesIO()
    fig.savefig(buffer, format="svg" if path.suffix.lower() == ".svg" else "png", dpi=110)
    plt.close(fig)
    return buffer.getvalue()


def _refuse_unsampled(analysis, what: str) -> None:
    """Refuse sampled output while a watched response depends on a parameter without a value."""
    from lumped.constants import s
    from lumped.language.parse import example_value

    needed = set()
    for result in analysis.results:
        if result.time is None or result.time.parameters:
            needed |= result.response.transform.free_symbols - {s}
    if not needed:
        return
    names = sorted(str(x) for x in needed)
    units = {p.name: p.unit for p in analysis.netlist.parameters}
    settings = " ".join(f"--set \"{name}={example_value(units.get(name, ''))}\""
                        for name in names)
    raise NetlistError(
        f"{what}: the waveforms cannot be sampled while {', '.join(names)} "
        f"{'has' if len(names) == 1 else 'have'} no value",
        hint=f"give {'it a value' if len(names) == 1 else 'them values'}, e.g. {settings}; "
        "the text report, --json and --latex keep the closed forms in the parameters",
    )


def emit(analysis, args) -> int:
    """Print the report, write the requested files; exit 0 pass, 1 a requirement fails."""
    colour = args.color == "always" or (args.color == "auto" and sys.stdout.isatty()
                                        and os.environ.get("NO_COLOR") is None)
    files: list[tuple[Path, str | bytes]] = []
    count = max(2, int(args.samples))
    for option in ("csv", "plot"):  # before anything is built, printed or written
        if getattr(args, option, None):
            _refuse_unsampled(analysis, f"--{option} {getattr(args, option)}")
    if args.json:
        files.append((Path(args.json), to_json(analysis)))
    if args.csv:
        files.append((Path(args.csv), to_csv(analysis, count)))
    if args.latex:
        files.append((Path(args.latex), to_latex(analysis)))
    if args.plot:
        files.append((Path(args.plot), plot(analysis, Path(args.plot), count)))
    write_all(files)
    status = 0 if analysis.passed else 1
    try:
        print(render(analysis, color=colour, quiet=args.quiet))
        for path, _ in files:
            print(f"wrote {path}")
        sys.stdout.flush()
    except BrokenPipeError:
        # The reader (e.g. `head`) left early; the verdicts still decide the status.
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
    return status
