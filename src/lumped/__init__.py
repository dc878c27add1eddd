"""lumped: exact closed-form transient responses of lumped linear networks.

Typical use from Python::

    import lumped
    analysis = lumped.analyse(lumped.load("examples/rc_inrush_limiter.lumped"))
    for result in analysis.results:
        print(result.quantity.label, result.figures.peak)

Each stage is usable on its own: :mod:`lumped.language.parse` (text to model),
:mod:`lumped.topology` (checks), :mod:`lumped.network` (exact s-domain
solution), :mod:`lumped.inversion` (closed-form time response),
:mod:`lumped.figures` (review figures and verdicts), :mod:`lumped.io.text`.
"""

from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["__version__", "analyse", "load", "loads"]


def __getattr__(name: str):
    # Keep `import lumped` light: the heavy stages load on first use.
    if name in ("analyse", "load", "loads"):
        from lumped import api

        return getattr(api, name)
    raise AttributeError(name)
