"""Every in-memory cache can be emptied, and emptying them changes no result.

The expected response is the R-C charge v(t) = 1 - exp(-t / RC) (common practice, no
source); the caches are found by reading the package's source for functools decorators.
"""

from __future__ import annotations

import ast
import importlib
from pathlib import Path

import numpy as np
import pytest
import sympy
from sympy.core import cache as sympy_cache

import lumped
from lumped.cachedir import START_UP_CACHES, clear_caches

SOURCE = Path(__file__).resolve().parents[1] / "src" / "lumped"

RC = """\
voltage source V at a step 1 V
resistor R from a to b 1 kohm
capacitor C at b 1 uF
watch voltage at b
window 5 ms
"""


def module_level_caches() -> list[str]:
    """Qualified names of the functions decorated with a functools cache at module level."""
    found = []
    for path in sorted(SOURCE.rglob("*.py")):
        module = ".".join(("lumped", *path.relative_to(SOURCE).with_suffix("").parts))
        module = module.removesuffix(".__init__")
        for node in ast.parse(path.read_text("utf-8")).body:
            if not isinstance(node, ast.FunctionDef):
                continue
            for decorator in node.decorator_list:
                target = decorator.func if isinstance(decorator, ast.Call) else decorator
                word = target.attr if isinstance(target, ast.Attribute) else target.id
                if word in ("cache", "lru_cache"):
                    found.append(f"{module}.{node.name}")
    return found


def resolve(qualified: str):
    module, name = qualified.rsplit(".", 1)
    return getattr(importlib.import_module(module), name)


def test_the_start_up_caches_exist():
    for qualified in START_UP_CACHES:
        assert callable(resolve(qualified).cache_clear), qualified


def test_clearing_empties_every_cache_and_sympys_and_keeps_the_answer():
    names = module_level_caches()
    assert len(names) >= 5  # the scan does find the package's caches
    response = lumped.analyse(lumped.loads(RC)).result("voltage at b").time
    times = np.linspace(0.0, 5e-3, 11)
    before = response.evaluate(times)
    for qualified in names:
        resolve(qualified)  # every module loaded, so that its caches count
    assert any(resolve(q).cache_info().currsize for q in names)
    assert sum(f.cache_info().currsize for f in sympy_cache.CACHE) > 0

    assert clear_caches() > 0
    for qualified in names:
        expected_empty = qualified not in START_UP_CACHES
        if expected_empty:
            assert resolve(qualified).cache_info().currsize == 0, qualified
    assert sum(f.cache_info().currsize for f in sympy_cache.CACHE) == 0
    assert resolve("lumped.language.grammar.parser").cache_info().currsize == 1  # kept

    after = lumped.analyse(lumped.loads(RC)).result("voltage at b").time.evaluate(times)
    assert np.array_equal(before, after)
    assert np.allclose(after, 1.0 - np.exp(-times / 1e-3), rtol=1e-12, atol=1e-15)


def test_clearing_the_start_up_caches_too_builds_them_again():
    lumped.loads(RC)
    clear_caches(start_up=True)
    for qualified in START_UP_CACHES:
        assert resolve(qualified).cache_info().currsize == 0, qualified
    net = lumped.loads(RC)
    assert net.elements[1].value == sympy.Integer(1000)
    assert resolve("lumped.language.grammar.parser").cache_info().currsize == 1


@pytest.mark.parametrize("start_up", [False, True])
def test_the_package_level_name_is_the_same_function(start_up):
    assert lumped.clear_caches is clear_caches
    assert isinstance(lumped.clear_caches(start_up=start_up), int)
