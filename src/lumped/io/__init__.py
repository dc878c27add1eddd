"""Outputs: an analysis for people and for programs.

Receives an immutable :class:`lumped.analysis.Analysis`; hands on text and
files, and writes nothing but the files asked for, atomically and never over
the input netlist.

Modules: ``notation`` (engineering numbers, short formulas), ``text`` (the
report), ``summary`` (network summary, transfer functions), ``records`` (JSON,
CSV), ``latex``, ``plotting``, ``notebook`` (HTML), ``files`` (checks and
atomic writing; :func:`write`).

Each name loads its module on first use, so that the command line's checks
(``lumped.io.files``, ``lumped.io.summary``) do not load numpy or the plotting.

Examples
--------
>>> from lumped.api import loads
>>> from lumped.analysis import analyse
>>> from lumped.io import render
>>> report = render(analyse(loads("current source I at a step 1 mA\\n"
...                               "resistor R from a to ground 1 kohm\\n")))
>>> report.splitlines()[-1]
'no requirements stated'
"""

from __future__ import annotations

import importlib
from typing import Any

# Where each public name lives.
_PUBLIC_NAMES = {
    "check_outputs": "lumped.io.files",
    "write": "lumped.io.files",
    "write_all": "lumped.io.files",
    "write_atomically": "lumped.io.files",
    "quantity_latex": "lumped.io.latex",
    "to_latex": "lumped.io.latex",
    "to_html": "lumped.io.notebook",
    "plot": "lumped.io.plotting",
    "refuse_unsampled": "lumped.io.records",
    "to_csv": "lumped.io.records",
    "to_json": "lumped.io.records",
    "network_summary": "lumped.io.summary",
    "transfer_text": "lumped.io.summary",
    "render": "lumped.io.text",
}

__all__ = sorted(_PUBLIC_NAMES)


def __getattr__(name: str) -> Any:
    if name in _PUBLIC_NAMES:
        return getattr(importlib.import_module(_PUBLIC_NAMES[name]), name)
    raise AttributeError(f"module 'lumped.io' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted({*globals(), *__all__})
