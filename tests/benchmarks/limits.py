"""Run one measurement in a forked child, killed at a time limit.

A case that would take minutes is reported as over the limit instead of
holding up the run.  The child starts from the parent's state (modules already
imported, caches cleared just before the fork), times itself, and sends back a
dictionary; every repetition is a fresh child, so each starts from the same state.
"""

from __future__ import annotations

import gc
import multiprocessing
import time
from collections.abc import Callable

import lumped

GRACE = 10.0  # seconds beyond the limit for the child to send what it measured


def _child(func: Callable[..., dict], args: tuple, conn) -> None:
    try:
        lumped.clear_caches()
        gc.collect()
        result = func(*args)
        result.setdefault("status", "ok")
    except Exception as error:  # a failure is a result of the benchmark, not a crash
        result = {"status": "error", "error": f"{type(error).__name__}: {error}"[:300]}
    conn.send(result)
    conn.close()


def run_limited(func: Callable[..., dict], args: tuple, limit: float) -> dict:
    """``func(*args)`` in a forked child; ``{"status": "over limit"}`` when it takes too long.

    ``func`` returns a dictionary with its own measured ``"total"`` (seconds);
    a total above ``limit`` counts as over the limit too.
    """
    lumped.clear_caches()
    gc.collect()
    ctx = multiprocessing.get_context("fork")
    parent, child = ctx.Pipe(duplex=False)
    process = ctx.Process(target=_child, args=(func, args, child), daemon=True)
    began = time.perf_counter()
    process.start()
    child.close()
    result: dict
    if parent.poll(limit + GRACE):
        try:
            result = parent.recv()
        except EOFError:
            process.join(5.0)
            result = {"status": "error",
                      "error": f"the child process ended (exit code {process.exitcode})"}
    else:
        result = {"status": "over limit"}
    if result.get("status") == "ok" and result.get("total", 0.0) > limit:
        result = {"status": "over limit", "measured": result["total"]}
    result["limit"] = limit
    result["wall"] = time.perf_counter() - began
    if process.is_alive():
        process.kill()
    process.join(10.0)
    parent.close()
    return result


def best_of(func: Callable[..., dict], args: tuple, limit: float, repeats: int,
            keep_first: tuple[str, ...] = ()) -> dict:
    """The run with the least ``total`` of ``repeats`` limited runs.

    Stops at the first run that fails or is over the limit, and after a first
    run longer than a third of the limit (one run is then the measurement).
    Entries named in ``keep_first`` (large arrays) are kept from the first run only.
    """
    runs: list[dict] = []
    kept: dict = {}
    for index in range(repeats):
        result = run_limited(func, args, limit)
        if result["status"] != "ok":
            if runs:
                break  # an earlier run counts; a later failure is noted
            return result
        if index == 0:
            kept = {k: result.pop(k) for k in keep_first if k in result}
        else:
            for k in keep_first:
                result.pop(k, None)
        runs.append(result)
        if result["total"] > limit / 3:
            break
    best = dict(min(runs, key=lambda r: r["total"]))
    best.update(kept)
    best["totals"] = [r["total"] for r in runs]
    best["runs"] = len(runs)
    if "cpu" in best:
        best["cpu_best"] = min(r["cpu"] for r in runs)
    if "stages" in best:
        best["stages_best"] = {k: min(r["stages"][k] for r in runs) for k in best["stages"]}
        best["stages_cpu_best"] = {k: min(r["stages_cpu"][k] for r in runs)
                                   for k in best["stages_cpu"]}
    return best
