"""lumped's caches: folders on disk that speed up start-up, and clearing those in memory.

Nothing cached changes a result; the caches only save work.  The in-memory ones
are the ``functools`` caches of lumped's modules (parsed units, factorisations,
certified roots, ...) and sympy's own cache; :func:`clear_caches` empties them
all, so that repeated timings start from the same state.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

# Built once per process from the package's own files, whatever the input: kept
# by clear_caches() unless asked (a new parser or unit registry costs start-up time).
START_UP_CACHES = (
    "lumped.language.grammar.parser",
    "lumped.language.units.registry",
    "lumped.language.diagnostics._example_keys",
)


def cache_folder(name: str) -> Path | None:
    """A private, writable cache folder ``~/.cache/lumped/<name>``, or None.

    Examples
    --------
    >>> folder = cache_folder("pint")
    >>> folder is None or folder.is_dir()
    True
    """
    base = os.environ.get("XDG_CACHE_HOME") or str(Path.home() / ".cache")
    folder = Path(base) / "lumped" / name
    try:
        folder.mkdir(mode=0o700, parents=True, exist_ok=True)
        # The caches are loaded as pickles: use only folders that nobody else can write.
        for place in (folder, folder.parent):
            info = place.stat()
            if info.st_uid != os.getuid() or info.st_mode & 0o022:
                return None
        for entry in folder.iterdir():
            info = entry.lstat()
            if info.st_uid != os.getuid() or info.st_mode & 0o022:
                return None
    except OSError:
        return None
    return folder if os.access(folder, os.W_OK) else None


def clear_caches(start_up: bool = False) -> int:
    """Empty every in-memory cache of lumped's loaded modules, and sympy's cache.

    Parameters
    ----------
    start_up : bool
        Also drop what is built once per process whatever the input (the
        netlist parser, the unit registry: ``START_UP_CACHES``); they are built
        again, from the folders on disk, on next use.

    Returns
    -------
    int
        How many ``functools`` caches were emptied.

    Examples
    --------
    >>> from lumped.language.units import parse_unit
    >>> _ = parse_unit("kN*s/m")
    >>> clear_caches() > 0, parse_unit.cache_info().currsize
    (True, 0)
    """
    seen: set[int] = set()
    for name, module in list(sys.modules.items()):
        if module is None or not (name == "lumped" or name.startswith("lumped.")):
            continue
        for attribute, value in list(vars(module).items()):
            owners = [value]
            if isinstance(value, type) and value.__module__ == name:
                owners += list(vars(value).values())  # functools caches on methods
            for owner in owners:
                if id(owner) in seen or not callable(getattr(owner, "cache_clear", None)):
                    continue
                qualified = (f"{getattr(owner, '__module__', name)}."
                             f"{getattr(owner, '__qualname__', attribute)}")
                if not start_up and qualified in START_UP_CACHES:
                    continue
                seen.add(id(owner))
                owner.cache_clear()
    if "sympy" in sys.modules:
        from sympy.core.cache import clear_cache

        clear_cache()
    return len(seen)
