"""Where lumped may keep caches that only speed up start-up (never results)."""

from __future__ import annotations

import os
from pathlib import Path


def cache_folder(name: str) -> Path | None:
    """A writable cache folder ``~/.cache/lumped/<name>``, or None if there is none.

    Examples
    --------
    >>> folder = cache_folder("doc-example")
    >>> folder is None or folder.is_dir()
    True
    """
    base = os.environ.get("XDG_CACHE_HOME") or str(Path.home() / ".cache")
    folder = Path(base) / "lumped" / name
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError:
        return None
    return folder if os.access(folder, os.W_OK) else None
