"""Run the runnable examples in the public docstrings of every module."""

from __future__ import annotations

import doctest
import importlib
import pkgutil

import pytest

import lumped

# Every module of every stage package, not only the top level.
MODULES = sorted(
    name for _, name, _ in pkgutil.walk_packages(lumped.__path__, "lumped.")
    if not name.endswith((".grammar", ".examples"))
)


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples_run(name: str) -> None:
    module = importlib.import_module(name)
    result = doctest.testmod(module, optionflags=doctest.NORMALIZE_WHITESPACE | doctest.ELLIPSIS)
    assert result.failed == 0, f"{result.failed} docstring example(s) failed in {name}"
