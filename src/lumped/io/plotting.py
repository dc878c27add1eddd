"""The waveforms drawn: one panel per unit, requirement limits and extremes marked."""

from __future__ import annotations

import io
from pathlib import Path

import numpy as np

from lumped import model as m
from lumped.io.notation import engineering
from lumped.io.records import refuse_unsampled, samples

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

    Parameters
    ----------
    analysis : Analysis
    path : Path
        Where the drawing will go; its ending chooses SVG (``.svg``) or PNG.
    count : int
        Points per waveform.

    Returns
    -------
    bytes
        The drawing, for the caller to write.

    Raises
    ------
    NetlistError
        When a watched response depends on a parameter without a value.

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> analysis = analyse(loads("current source I at a step 1 mA\\n"
    ...                          "resistor R from a to ground 1 kohm\\n"))
    >>> plot(analysis, Path("r.png"), 50)[:4]
    b'\\x89PNG'
    """
    refuse_unsampled(analysis, "a plot")
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    times, columns = samples(analysis, count)
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
