"""The language reference, shipped beside the grammar."""

from __future__ import annotations

from importlib import resources
from pathlib import Path


def language_reference() -> str:
    """Return the text of the netlist language reference.

    Examples
    --------
    >>> "watch" in language_reference()
    True
    """
    try:
        return resources.files("lumped.grammar").joinpath("language.md").read_text("utf-8")
    except (ModuleNotFoundError, FileNotFoundError, TypeError):
        here = Path(__file__).resolve().parents[3] / "grammar" / "language.md"
        return here.read_text("utf-8")
