"""Records of an analysis for programs: JSON (every result) and CSV (sampled waveforms).

The JSON schema is described in docs/outputs.md.

Examples
--------
>>> import json
>>> from lumped.api import loads
>>> from lumped.analysis import analyse
>>> analysis = analyse(loads("current source I at a step 1 mA\\n"
...                          "resistor R from a to ground 1 kohm\\n"))
>>> json.loads(to_json(analysis))["quantities"][0]["label"]
'voltage at a'
>>> to_csv(analysis, 2).splitlines()[0]
'time [s],voltage at a [V]'
"""

from __future__ import annotations

import csv
import io
import json
import math

import numpy as np

from lumped import __version__
from lumped.errors import NetlistError
from lumped.figures import in_g

JSON_SCHEMA_VERSION = 1

def sample_times(analysis, count: int) -> np.ndarray:
    """``count`` evenly spaced times over the analysis window (at least 2).

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> sample_times(SimpleNamespace(start=0.0, stop=1.0), 3)
    array([0. , 0.5, 1. ])
    """
    return np.linspace(analysis.start, analysis.stop, max(2, count))


def samples(analysis, count: int) -> tuple[np.ndarray, list[tuple[str, str, np.ndarray]]]:
    """The sample times, and (label, unit, values) for each quantity with a numeric form.

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> times, columns = samples(analyse(loads("current source I at a step 1 mA\\n"
    ...                                        "resistor R from a to ground 1 kohm\\n")), 3)
    >>> [(label, unit, values.tolist()) for label, unit, values in columns]
    [('voltage at a', 'V', [1.0, 1.0, 1.0])]
    """
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

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> analysis = analyse(loads("current source I at a step 1 mA\\n"
    ...                          "resistor R from a to ground 1 kohm\\nwindow 1 s\\n"))
    >>> print(to_csv(analysis, 2), end="")
    time [s],voltage at a [V]
    0.0,1.0
    1.0,1.0
    """
    refuse_unsampled(analysis, "CSV samples")
    times, columns = samples(analysis, count)
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
    """The results as JSON; the schema is described in docs/outputs.md.

    Examples
    --------
    >>> import json
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> analysis = analyse(loads("current source I at a step 1 mA\\n"
    ...                          "resistor R from a to ground 1 kohm\\n"))
    >>> json.loads(to_json(analysis))["quantities"][0]["time_domain"]
    '1'
    """
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


def refuse_unsampled(analysis, what: str) -> None:
    """Refuse sampled output while a watched response depends on a parameter without a value.

    Parameters
    ----------
    analysis : Analysis
    what : str
        What would be sampled, to start the message (e.g. ``"CSV samples"``).

    Raises
    ------
    NetlistError
        Naming the parameters and how to give them values.

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> analysis = analyse(loads("let R in ohm\\ncurrent source I at a step 1 A\\n"
    ...                          "resistor R1 from a to ground R\\n"))
    >>> try:
    ...     refuse_unsampled(analysis, "a table")
    ... except NetlistError as error:
    ...     print(error.message)
    a table: the waveforms cannot be sampled while R has no value
    """
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
