"""How much initial conditions and gravity cost: ladders and a mass chain through ``analyse``.

Each case runs in a fresh interpreter (no warm caches), is timed with wall and
CPU time (``time.process_time``), and is stopped at a time limit.  The netlists
are generated here:

* an RLC ladder of N sections: 1 V step, series 1 ohm + 1 uH, shunt 1 uF,
  1 ohm load; at rest, or with every capacitor ``initially 1 V`` and every
  inductor ``initially 0.1 A``; one node watched (the last) or every node;
* a chain of masses of 1 kg joined by 1 kN/m springs and 50 N*s/m dampers,
  the last to the frame, under ``gravity`` (unloaded start, or from
  equilibrium with a 1 N force step on the first mass).

Run from the repository root::

    python scripts/initial_conditions_speed.py --sizes 10 20 40 100 --limit 300

It prints a table (Markdown): wall and CPU time of ``analyse`` (the import
apart), and the CPU time spent in the network stage (``assemble`` and every
``Solution.response``) and in the inversion; with ``--json FILE`` it writes the
figures.  ``--path`` runs another tree (``PYTHONPATH``), for a before/after
comparison; a tree without ``invert_ratios`` is timed without the inversion column.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import time


def ladder_text(sections: int, initial: bool, every_node: bool) -> str:
    """An RLC ladder netlist; with ``initial``, a value on every store."""
    capacitor_start = ", initially 1 V" if initial else ""
    inductor_start = ", initially 0.1 A" if initial else ""
    lines = ["voltage source V from n0 to ground step 1 V"]
    for k in range(1, sections + 1):
        lines += [f"resistor R{k} from n{k - 1} to a{k} 1 ohm",
                  f"inductor L{k} from a{k} to n{k} 1 uH{inductor_start}",
                  f"capacitor C{k} from n{k} to ground 1 uF{capacitor_start}"]
    lines.append(f"resistor Rload from n{sections} to ground 1 ohm")
    if not every_node:
        lines.append(f"watch voltage at n{sections}")
    return "\n".join(lines) + "\n"


def chain_text(masses: int, equilibrium: bool, every_node: bool) -> str:
    """A chain of masses under gravity (unloaded start, or from equilibrium with a force step)."""
    lines = ["gravity from equilibrium" if equilibrium else "gravity"]
    lines += [f"mass m{k} 1 kg" for k in range(1, masses + 1)]
    for k in range(1, masses + 1):
        other = f"m{k + 1}" if k < masses else "frame"
        lines += [f"spring K{k} from m{k} to {other} 1 kN/m",
                  f"damper D{k} from m{k} to {other} 50 N*s/m"]
    if equilibrium:
        lines.append("force source F at m1 step 1 N")
    if not every_node:
        lines.append(f"watch velocity of m{masses}")
    return "\n".join(lines) + "\n"


CHILD = r"""
import json, sys, time
text = sys.stdin.read()
wall, cpu = time.perf_counter(), time.process_time()
import lumped
from lumped.analysis import analyse, responses, run
from lumped.api import loads
from lumped.network import Solution
loaded, loaded_cpu = time.perf_counter(), time.process_time()
spent = {"network": 0.0, "inversion": 0.0}


def timed(function, stage):
    def wrapper(*args, **kwargs):
        start = time.process_time()
        try:
            return function(*args, **kwargs)
        finally:
            spent[stage] += time.process_time() - start
    return wrapper


# CPU time by stage: the network's solve and responses, and the inversion.
run.assemble = timed(run.assemble, "network")
Solution.response = timed(Solution.response, "network")
responses.invert = timed(responses.invert, "inversion")
if hasattr(responses, "invert_ratios"):
    responses.invert_ratios = timed(responses.invert_ratios, "inversion")
analysis = analyse(loads(text, "case"))
closed = sum(1 for r in analysis.results if r.time is not None and r.figures is not None)
print(json.dumps({"wall": time.perf_counter() - loaded, "cpu": time.process_time() - loaded_cpu,
                  "import": loaded - wall, "quantities": len(analysis.results),
                  "with_figures": closed, **spent}))
"""


def run_case(text: str, limit: float, python: str, path: str | None) -> dict:
    """One analysis in a fresh interpreter; the import is timed apart from the analysis."""
    env = dict(os.environ)
    if path:
        env["PYTHONPATH"] = path
    start = time.perf_counter()
    try:
        done = subprocess.run([python, "-c", CHILD], input=text, capture_output=True,
                              text=True, timeout=limit, env=env, check=False)
    except subprocess.TimeoutExpired:
        return {"wall": None, "cpu": None, "limit": limit}
    if done.returncode != 0:
        return {"error": done.stderr[-2000:], "wall": time.perf_counter() - start}
    return json.loads(done.stdout.strip().splitlines()[-1])


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", type=int, nargs="+", default=[10, 20, 40, 100])
    parser.add_argument("--masses", type=int, default=40)
    parser.add_argument("--limit", type=float, default=300.0, help="seconds per case")
    parser.add_argument("--python", default=sys.executable)
    parser.add_argument("--path", default=None, help="PYTHONPATH for the runs (another tree)")
    parser.add_argument("--only", default=None, help="'ladder' or 'chain'")
    parser.add_argument("--json", default=None)
    args = parser.parse_args()
    cases = []
    if args.only in (None, "ladder"):
        for n in args.sizes:
            for every in (False, True):
                for initial in (False, True):
                    cases.append((f"ladder {n}", "every node" if every else "one node",
                                  "initial" if initial else "at rest",
                                  ladder_text(n, initial, every)))
    if args.only in (None, "chain"):
        for every in (False, True):
            for equilibrium in (False, True):
                cases.append((f"chain {args.masses}", "every node" if every else "one node",
                              "gravity from equilibrium" if equilibrium else "gravity",
                              chain_text(args.masses, equilibrium, every)))
    rows = []
    print("| case | watched | start | wall (s) | CPU (s) | network CPU (s) | inversion CPU (s) "
          "| quantities | import (s) |")
    print("|---|---|---|---|---|---|---|---|---|")
    for name, watched, start, text in cases:
        result = run_case(text, args.limit, args.python, args.path)
        rows.append({"case": name, "watched": watched, "start": start, **result})
        if "error" in result:
            shown = f"error: {result['error'].strip().splitlines()[-1]}"
            print(f"| {name} | {watched} | {start} | {shown} | | | | | |", flush=True)
            continue
        wall = f"> {args.limit:.0f}" if result["wall"] is None else f"{result['wall']:.2f}"
        cpu = "" if result["cpu"] is None else f"{result['cpu']:.2f}"
        loading = f"{result['import']:.2f}" if "import" in result else ""
        stages = " | ".join(f"{result[k]:.2f}" if k in result else ""
                            for k in ("network", "inversion"))
        print(f"| {name} | {watched} | {start} | {wall} | {cpu} | {stages} | "
              f"{result.get('quantities', '')} | {loading} |", flush=True)
    if args.json:
        with open(args.json, "w", encoding="utf-8") as handle:
            json.dump(rows, handle, indent=1)


if __name__ == "__main__":
    main()
