"""An analysis as HTML for a notebook: the report's figures and verdicts in tables.

Every text that reaches the page (file name, labels, reasons, cautions) is
escaped, so a netlist can never inject markup.

Examples
--------
>>> from lumped.api import loads
>>> from lumped.analysis import analyse
>>> page = to_html(analyse(loads("current source I at a step 1 mA\\n"
...                              "resistor R from a to ground 1 kohm\\n")))
>>> page.startswith("<div") and "&lt;text&gt;" in page
True
"""

from __future__ import annotations

from html import escape

from lumped.io.notation import engineering, pretty_unit
from lumped.io.text import figure_rows, requirement_text

_MARKS = {True: ("PASS", "#1a7f37"), False: ("FAIL", "#cf222e"), None: ("????", "#9a6700")}


# Notebooks align table cells right by default; text reads better from the left.
_STYLE = ("<style>.lumped-analysis th, .lumped-analysis td "
          "{text-align: left; vertical-align: top}</style>")


def _cell(text: str, tag: str = "td", style: str = "") -> str:
    styled = f' style="{escape(style)}"' if style else ""
    return f"<{tag}{styled}>{escape(text)}</{tag}>"


def _row(cells: list[str]) -> str:
    return "<tr>" + "".join(cells) + "</tr>"


def _figures_text(result) -> list[str]:
    """One line per figure, or why there are none."""
    if result.figures is None:
        return [result.problem or "no figures"]
    return [f"{name}: {value}" for name, value in figure_rows(result)]


def to_html(analysis) -> str:
    """The quantities with their figures, the requirements with their verdicts, as HTML.

    Parameters
    ----------
    analysis : Analysis

    Returns
    -------
    str
        A ``<div>`` holding a heading line and two tables; every text escaped.
    """
    window = (f"window {engineering(analysis.start, 's')} to "
              f"{engineering(analysis.stop, 's')}"
              + (" (chosen by the tool)" if analysis.window_chosen else ""))
    passing = sum(1 for v in analysis.verdicts if v.passed)
    summary = (f"{passing} of {len(analysis.verdicts)} requirements pass" if analysis.verdicts
               else "no requirements stated")
    parts = ['<div class="lumped-analysis">', _STYLE,
             f"<p><b>{escape(str(analysis.netlist.source))}</b>: {escape(window)}; "
             f"{escape(summary)}</p>",
             "<table>",
             _row([_cell("quantity", "th"), _cell("unit", "th"),
                   _cell("figures", "th")])]
    for result in analysis.results:
        figures = "<br>".join(escape(line) for line in _figures_text(result))
        parts.append(_row([_cell(result.quantity.label),
                           _cell(pretty_unit(result.unit)),
                           f"<td>{figures}</td>"]))
    parts.append("</table>")
    if analysis.verdicts:
        parts.append("<table>")
        parts.append(_row([_cell("verdict", "th"), _cell("requirement", "th"),
                           _cell("line", "th"), _cell("result", "th")]))
        for verdict in analysis.verdicts:
            mark, colour = _MARKS[verdict.passed]
            what, got = requirement_text(verdict)
            location = verdict.requirement.location
            parts.append(_row([_cell(mark, style=f"color:{colour};font-weight:bold"),
                               _cell(what),
                               _cell(str(location.line) if location else "?"),
                               _cell(got)]))
        parts.append("</table>")
    if analysis.cautions:
        parts.append("<ul>" + "".join(f"<li>{escape(c)}</li>" for c in analysis.cautions)
                     + "</ul>")
    parts.append("</div>")
    return "\n".join(parts)
