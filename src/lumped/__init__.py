"""lumped: exact closed-form transient responses of lumped linear networks.

Typical use from Python::

    import lumped
    analysis = lumped.analyse(lumped.load("examples/rc_inrush_limiter.lumped"))
    analysis                                  # a short summary; a table in a notebook
    analysis.result("voltage at bus").figures.peak
    print(lumped.render(analysis))            # the report the command line prints
    lumped.write(analysis, json="inrush.json", plot="inrush.png")

Each stage is usable on its own, as a subpackage loaded on first use:
:mod:`lumped.language` (text to model), :mod:`lumped.topology` (checks),
:mod:`lumped.network` (exact s-domain solution), :mod:`lumped.algebra`,
:mod:`lumped.inversion` (closed-form time response), :mod:`lumped.figures`
(review figures and verdicts), :mod:`lumped.analysis` (all of them for one
netlist), :mod:`lumped.io` (report and files).  Every error the tool raises on
purpose is a :class:`LumpedError`.

Examples
--------
>>> import lumped
>>> analysis = lumped.analyse(lumped.loads("current source I at a step 1 mA\\n"
...                                        "resistor R from a to ground 1 kohm\\n"))
>>> analysis.labels
('voltage at a',)
"""

from __future__ import annotations

import importlib
from typing import Any

__version__ = "0.1.0"

# Where each public name lives; nothing is imported until it is first used, so that
# `import lumped` stays light.
_PUBLIC_NAMES = {
    "load": "lumped.api",
    "loads": "lumped.api",
    "analyse": "lumped.api",
    "render": "lumped.io",
    "write": "lumped.io",
    "Analysis": "lumped.analysis",
    "QuantityResult": "lumped.analysis",
    "Dissipation": "lumped.analysis",
    "DropResult": "lumped.analysis",
    "LumpedError": "lumped.errors",
    "clear_caches": "lumped.cachedir",
}
_STAGES = ("language", "model", "topology", "network", "algebra", "inversion", "figures",
           "analysis", "io", "errors")

__all__ = ["__version__", *_PUBLIC_NAMES, *_STAGES]


def __getattr__(name: str) -> Any:
    if name in _PUBLIC_NAMES:
        return getattr(importlib.import_module(_PUBLIC_NAMES[name]), name)
    if name in _STAGES:
        return importlib.import_module(f"lumped.{name}")
    raise AttributeError(f"module 'lumped' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(__all__)
