"""Files: where outputs may go, and writing them so that a reader never sees half a file.

Every file is written atomically: into a temporary file in the same folder,
then renamed over the target, so a reader never sees half a file and a failed
run leaves nothing behind.  Outputs never replace the input netlist.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from lumped.errors import NetlistError

# The plot's file formats, by file name ending.
PLOT_SUFFIXES = (".png", ".svg")
# Points per sampled waveform: at least the two ends, at most what fits in memory comfortably.
FEWEST_SAMPLES, MOST_SAMPLES = 2, 10_000_000

def write_atomically(path: Path, data: str | bytes) -> None:
    """Write ``data`` to ``path`` through a temporary file and a rename.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "out.txt"
    >>> write_atomically(p, "hello")
    >>> p.read_text()
    'hello'
    """
    os.replace(_write_temporary(Path(path), data), path)


def write_all(files: list[tuple[Path, str | bytes]]) -> None:
    """Write several files so that either all of them land or none is touched.

    Raises
    ------
    NetlistError
        When one cannot be written; the others are not written either.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> folder = pathlib.Path(tempfile.mkdtemp())
    >>> try:
    ...     write_all([(folder / "a.txt", "a"), (folder / "no" / "b.txt", "b")])
    ... except NetlistError:
    ...     pass
    >>> list(folder.iterdir())
    []
    """
    staged: list[tuple[str, Path]] = []
    try:
        for path, data in files:
            staged.append((_write_temporary(path, data), path))
    except OSError as error:
        for temporary, _ in staged:
            Path(temporary).unlink(missing_ok=True)
        raise NetlistError(f"cannot write {path}: {error.strerror or error}",
                           hint="check the folder exists and is writable, and the disk has room"
                           ) from None
    for temporary, path in staged:
        os.replace(temporary, path)


def _write_temporary(path: Path, data: str | bytes) -> str:
    """``data`` in a temporary file beside ``path``; returns the temporary's name."""
    binary = isinstance(data, bytes)
    handle, temporary = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".part")
    try:
        with os.fdopen(handle, "wb" if binary else "w", **({} if binary else
                                                           {"encoding": "utf-8",
                                                            "newline": ""})) as stream:
            stream.write(data)
        # mkstemp makes the file private; give it the permissions a plain open() would.
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(temporary, 0o666 & ~umask)
    except BaseException:
        Path(temporary).unlink(missing_ok=True)
        raise
    return temporary


def check_outputs(source: str | Path, outputs: list[Path]) -> None:
    """Refuse outputs that would overwrite the input or each other, or land nowhere.

    Raises
    ------
    NetlistError
        Naming the output and what to do instead.

    Examples
    --------
    >>> try:
    ...     check_outputs("filter.lumped", [Path("out.json"), Path("filter.lumped")])
    ... except NetlistError as error:
    ...     print(error.message)
    refusing to overwrite the input file filter.lumped
    """
    source = Path(source)
    seen: set[Path] = set()
    try:
        source_resolved = source.resolve()
    except OSError:
        source_resolved = source
    for output in outputs:
        resolved = output.resolve()
        if resolved == source_resolved:
            raise NetlistError(f"refusing to overwrite the input file {source}",
                               hint="name a different output file")
        if resolved.suffix == source.suffix and source.suffix == ".lumped":
            raise NetlistError(f"refusing to write results into a netlist file ({output})",
                               hint="name outputs .json, .csv, .png, .svg or .tex")
        if resolved in seen:
            raise NetlistError(f"two outputs are both {output}", hint="give each its own file")
        seen.add(resolved)
        if resolved.is_dir():
            raise NetlistError(f"{output} is a folder", hint="name a file to write")
        if not resolved.parent.is_dir():
            raise NetlistError(f"the folder for {output} does not exist",
                               hint="create it first or name another place")


def write(analysis, *, json: str | Path | None = None, csv: str | Path | None = None,
          latex: str | Path | None = None, plot: str | Path | None = None,
          samples: int = 2001) -> tuple[Path, ...]:
    """Write the requested outputs of an analysis: all of them, or none.

    Parameters
    ----------
    analysis : Analysis
    json, csv, latex, plot : path, optional
        Where to write the results as JSON, the sampled waveforms as CSV, the
        formulas as LaTeX, and the drawing (``.png`` or ``.svg``).
    samples : int
        Points per waveform in the CSV and the plot.

    Returns
    -------
    tuple of Path
        The files written, in the order json, csv, latex, plot.

    Raises
    ------
    NetlistError
        When an output would replace the netlist or another output, its folder
        is missing, a waveform cannot be sampled (a parameter without a value),
        or a file cannot be written; nothing is written then.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> analysis = analyse(loads("current source I at a step 1 mA\\n"
    ...                          "resistor R from a to ground 1 kohm\\n"))
    >>> folder = pathlib.Path(tempfile.mkdtemp())
    >>> [p.name for p in write(analysis, json=folder / "r.json", csv=folder / "r.csv")]
    ['r.json', 'r.csv']
    """
    if plot is not None and Path(plot).suffix.lower() not in PLOT_SUFFIXES:
        raise NetlistError(f"plot {plot}: the plot is written as .png or .svg",
                           hint="name the file with one of those endings")
    if not FEWEST_SAMPLES <= samples <= MOST_SAMPLES:
        raise NetlistError(f"samples {samples}: give between {FEWEST_SAMPLES} and "
                           f"{MOST_SAMPLES} points", hint="2001 is plenty for a plot")
    requested = {kind: Path(path) for kind, path in
                 (("json", json), ("csv", csv), ("latex", latex), ("plot", plot))
                 if path is not None}
    check_outputs(analysis.netlist.source, list(requested.values()))
    if not requested:
        return ()
    # The writers load numpy (and matplotlib for a plot): only when a file asks for them.
    from lumped.io.latex import to_latex
    from lumped.io.plotting import plot as draw
    from lumped.io.records import to_csv, to_json

    builders = {"json": lambda path: to_json(analysis),
                "csv": lambda path: to_csv(analysis, samples),
                "latex": lambda path: to_latex(analysis),
                "plot": lambda path: draw(analysis, path, samples)}
    files = [(path, builders[kind](path)) for kind, path in requested.items()]
    write_all(files)
    return tuple(path for path, _ in files)
