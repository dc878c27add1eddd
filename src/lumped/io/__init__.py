"""Outputs: an analysis for people and for programs.

Receives an immutable :class:`lumped.analysis.Analysis`; hands on text and
files, and writes nothing but the files asked for, atomically and never over
the input netlist.

Modules: ``notation`` (engineering numbers, short formulas), ``text`` (the
report), ``summary`` (network summary, transfer functions), ``records`` (JSON,
CSV), ``latex``, ``plotting``, ``notebook`` (HTML), ``files`` (checks and
atomic writing; :func:`write`).

Examples
--------
>>> from lumped.api import loads
>>> from lumped.analysis import analyse
>>> report = render(analyse(loads("current source I at a step 1 mA\\n"
...                               "resistor R from a to ground 1 kohm\\n")))
>>> report.splitlines()[-1]
'no requirements stated'
"""

from lumped.io.files import check_outputs, write, write_all, write_atomically
from lumped.io.latex import quantity_latex, to_latex
from lumped.io.notebook import to_html
from lumped.io.plotting import plot
from lumped.io.records import refuse_unsampled, to_csv, to_json
from lumped.io.summary import network_summary, transfer_text
from lumped.io.text import render

__all__ = [
    "check_outputs",
    "network_summary",
    "plot",
    "quantity_latex",
    "refuse_unsampled",
    "render",
    "to_csv",
    "to_html",
    "to_json",
    "to_latex",
    "transfer_text",
    "write",
    "write_all",
    "write_atomically",
]
