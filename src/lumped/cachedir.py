"""Where lumped may keep caches that only speed up start-up (never results)."""

from __future__ import annotations

import os
from pathlib import Path


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
