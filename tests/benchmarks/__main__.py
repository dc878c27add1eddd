"""Speed benchmark of lumped against a numerical integrator and the general CAS route.

Run from the repository root::

    python -m tests.benchmarks            # everything, best of 3 (about half an hour)
    python -m tests.benchmarks --quick    # one run each, short limits, no CAS: ~5 minutes

Results go to ``tests/benchmarks/results/latest.json`` and ``latest.md``.
Every netlist is generated here (``networks.py``), with state equations
written by hand from the same description, independently of lumped.
"""

from __future__ import annotations

import os

# One BLAS/OpenMP thread for this process and its children: steadier timings.
THREAD_VARIABLES = ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS",
                    "NUMEXPR_NUM_THREADS")
for _name in THREAD_VARIABLES:
    os.environ.setdefault(_name, "1")

import argparse  # noqa: E402
import datetime  # noqa: E402
import gc  # noqa: E402
import json  # noqa: E402
import math  # noqa: E402
import multiprocessing  # noqa: E402
import platform  # noqa: E402
import resource  # noqa: E402
import statistics  # noqa: E402
import subprocess  # noqa: E402
import sys  # noqa: E402
import tempfile  # noqa: E402
import time  # noqa: E402
from collections.abc import Callable  # noqa: E402
from importlib import metadata  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402
import sympy  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]
RESULTS = Path(__file__).resolve().parent / "results"
SRC = ROOT / "src"

try:
    import lumped

    INSTALLED = True
except ImportError:  # run from a checkout without installing: the source folder, by hand
    sys.path.insert(0, str(SRC))
    import lumped

    INSTALLED = False

from flint import fmpz_poly  # noqa: E402

from lumped.algebra.exact import rationalise  # noqa: E402
from lumped.analysis import analyse  # noqa: E402
from lumped.api import loads  # noqa: E402
from lumped.constants import s  # noqa: E402
from lumped.figures import compute_figures  # noqa: E402
from lumped.inversion import invert  # noqa: E402
from lumped.network import assemble  # noqa: E402
from tests.benchmarks import networks as nw  # noqa: E402
from tests.benchmarks.limits import best_of  # noqa: E402

REPEATS = 3
LIMIT = 120.0  # seconds per measurement in the full run
LIMIT_QUICK = 10.0  # in --quick; a case with a target gets at least 3x its target
CAS_LIMIT = 60.0  # seconds per small case on the CAS route
CAS_LIMIT_QUARTIC = 300.0
IVP_POINTS = 2001
IVP_RTOL = 1e-10
IVP_METHOD = "DOP853"

SIZES = (10, 20, 40, 100)
LADDER_VARIANTS = ("rest", "initial")
CHAIN_VARIANTS = ("rest", "initial", "gravity")
SCOPES = ("last", "every")
RANDOM_SEED = 20261201  # random 8-node networks: seeds RANDOM_SEED, RANDOM_SEED + 1, ...
RANDOM_COUNT, RANDOM_COUNT_QUICK = 10, 5
# Seeds whose window would hold more periods of one ringing than the tool follows are
# passed over (it refuses them, as its language guide says).
MOST_PERIODS = 1e5
CLI_REPEATS_QUICK = 2
BIG_ELEMENTS, BIG_SEED, BIG_NODES = 200, 20261249, 100  # checked when drawn
SMALL_LADDERS, SMALL_CHAINS = (1, 2, 5), (3, 6)

# The speed issue's targets (seconds unless said otherwise).
TARGETS = {
    "initial_cost_ratio": 1.5,  # initial conditions everywhere / the same network at rest
    "ladder20_initial_every": 1.0,
    "ladder100_initial_every": 5.0,
    "chain40_gravity_every": 1.0,
    "ladder20_closed_over_ivp": 2.0,
    "check_over_import_sympy": 1.0,
    "run_over_import_sympy": 2.5,
    "symbolic_3_sections": 0.5,
    "random_8_nodes": 0.5,
    "random_200_elements": 2.0,
}
# Targets of the earlier speed work, still measured.
EARLIER_TARGETS = {
    "s_domain_40_state": 0.5,
    "closed_form_40_state": 1.0,
    "quartic_ratio": 1000.0,
    "samples_1e6": 0.1,
    "figures_40_state": 0.2,
    "cli_example": 2.0,
}
# Which case each time target belongs to: (family, variant, size, scope) -> target key.
CASE_TARGETS = {
    ("ladder", "initial", 20, "every"): "ladder20_initial_every",
    ("ladder", "initial", 100, "every"): "ladder100_initial_every",
    ("chain", "gravity", 40, "every"): "chain40_gravity_every",
}

SYMBOLIC_LADDER = """\
# 3-section RLC ladder, every R, L and C a free parameter
let R in ohm
let L in H
let C in F
voltage source V from n0 to ground step 1 V
resistor R1 from n0 to a1 R
inductor L1 from a1 to n1 L
capacitor C1 from n1 to ground C
resistor R2 from n1 to a2 R
inductor L2 from a2 to n2 L
capacitor C2 from n2 to ground C
resistor R3 from n2 to a3 R
inductor L3 from a3 to n3 L
capacitor C3 from n3 to ground C
resistor Rload from n3 to ground 1 ohm
watch voltage at n3
"""


# --------------------------------------------------------------------------- formatting


def fmt_time(seconds: float | None) -> str:
    if seconds is None:
        return "–"
    if seconds < 1e-3:
        return f"{seconds * 1e6:.0f} µs"
    if seconds < 1.0:
        return f"{seconds * 1e3:.3g} ms"
    if seconds >= 100.0:
        return f"{seconds:.0f} s"
    return f"{seconds:.3g} s"


def fmt_ratio(value: float | None, lower_bound: bool = False) -> str:
    if value is None:
        return "–"
    text = f"{value:,.0f}×" if value >= 100 else f"{value:.3g}×"
    return ("≥ " if lower_bound else "") + text


def verdict(measured: float | None, target: float, above: bool = False,
            lower_bound: bool = False) -> str:
    """PASS or MISS; a lower bound (over the limit) passes only an "above" target."""
    if measured is None:
        return "MISS (not measured)"
    if lower_bound and not above:
        return "MISS"
    ok = measured > target if above else measured <= target
    return "PASS" if ok else "MISS"


def write_atomic(path: Path, text: str) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp")
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as handle:
            handle.write(text)
        os.chmod(tmp, 0o644)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def maxrss_mb(who: int = resource.RUSAGE_SELF) -> float:
    return resource.getrusage(who).ru_maxrss / 1024.0  # kilobytes on Linux


def status_text(result: dict | None) -> str | None:
    """A short text for a measurement that has no time (over limit, failed, skipped)."""
    if result is None:
        return None
    status = result.get("status")
    if status == "over limit":
        return f"over limit (> {result['limit']:.0f} s)"
    if status == "error":
        return f"failed: {result.get('error', '')}"
    if status == "skipped":
        return f"not run: {result.get('reason', '')}"
    return None


def time_cell(result: dict | None, key: str = "total") -> str:
    text = status_text(result)
    return text if text is not None else fmt_time(result.get(key) if result else None)


# --------------------------------------------------------------------------- measured in a child


def pipeline(text: str, name: str, t_eval: np.ndarray | None) -> dict:
    """Netlist text to closed forms and figures of every watched quantity, stage by stage."""
    marks, cpu_marks = [time.perf_counter()], [time.process_time()]

    def mark() -> None:
        marks.append(time.perf_counter())
        cpu_marks.append(time.process_time())

    net = loads(text, name)
    mark()
    solution = assemble(net)
    mark()
    responses = [solution.response(q) for q in net.watches]
    mark()
    times = [invert(rationalise(r.transform), s) for r in responses]
    mark()
    start, stop = float(net.window.start), float(net.window.stop)
    for t in times:
        compute_figures(t, start, stop)
    mark()
    names = ("parse", "assemble", "responses", "inversion", "figures")
    out = {"stages": dict(zip(names, np.diff(marks).tolist(), strict=True)),
           "stages_cpu": dict(zip(names, np.diff(cpu_marks).tolist(), strict=True)),
           "total": marks[-1] - marks[0], "cpu": cpu_marks[-1] - cpu_marks[0],
           "quantities": len(times), "modes": max((len(t.modes) for t in times), default=0)}
    if t_eval is not None:
        out["values"] = np.array([t.evaluate(t_eval) for t in times], dtype=float)
    return out


def analyse_run(text: str, name: str) -> dict:
    start, start_cpu = time.perf_counter(), time.process_time()
    analyse(loads(text, name))
    return {"total": time.perf_counter() - start, "cpu": time.process_time() - start_cpu}


def ivp_run(case: nw.Case, t_eval: np.ndarray, atol: float) -> dict:
    start, start_cpu = time.perf_counter(), time.process_time()
    values = nw.ivp_outputs(case, t_eval, IVP_METHOD, IVP_RTOL, atol)
    return {"total": time.perf_counter() - start, "cpu": time.process_time() - start_cpu,
            "values": values}


def symbolic_run(text: str) -> dict:
    marks, cpu_marks = [time.perf_counter()], [time.process_time()]
    net = loads(text, "symbolic")
    solution = assemble(net)
    marks.append(time.perf_counter())
    cpu_marks.append(time.process_time())
    tf = solution.transfer_function("V", net.watches[0])
    marks.append(time.perf_counter())
    cpu_marks.append(time.process_time())
    return {"stages": {"parse + assemble": marks[1] - marks[0],
                       "transfer function + stability": marks[2] - marks[1]},
            "stages_cpu": {"parse + assemble": cpu_marks[1] - cpu_marks[0],
                           "transfer function + stability": cpu_marks[2] - cpu_marks[1]},
            "total": marks[-1] - marks[0], "cpu": cpu_marks[-1] - cpu_marks[0],
            "stability": tf.stability, "degree": tf.denominator.degree(),
            "parameters": sorted(str(p) for p in tf.denominator.free_symbols - {s})}


# --------------------------------------------------------------------------- cases


def limit_for(target_key: str | None, quick: bool) -> float:
    if not quick:
        return LIMIT
    bound = TARGETS.get(target_key, 0.0) if target_key else 0.0
    return max(LIMIT_QUICK, 3.0 * bound)


def references(case: nw.Case, repeats: int, limit: float) -> dict:
    """Exact outputs and solve_ivp (timed, limited) on the hand-written equations."""
    t_eval = np.linspace(0.0, case.stop, IVP_POINTS)
    exact = nw.exact_outputs(case, t_eval)
    atol = 1e-12 * max(1.0, float(np.max(np.abs(exact))))
    ivp = best_of(ivp_run, (case, t_eval, atol), limit, repeats, keep_first=("values",))
    out = {"t_eval": t_eval, "exact": exact, "ivp": ivp}
    if ivp["status"] == "ok":
        ivp["diff_to_exact"] = nw.relative_difference(ivp.pop("values"), exact)
    return out


def measure(case: nw.Case, refs: dict, repeats: int, limit: float, full: bool) -> dict:
    """lumped on ``case`` (limited), beside the references for the same quantities."""
    print(f"  {case.name} {case.variant} {case.scope}: lumped", end="", flush=True)
    lumped_run = best_of(pipeline, (case.text, case.name, refs["t_eval"]), limit, repeats,
                         keep_first=("values",))
    row = {"name": case.name, "family": case.family, "variant": case.variant,
           "size": case.size, "scope": case.scope, "states": case.states,
           "quantities": len(case.labels), "window_s": case.stop, "notes": case.notes,
           "lumped": lumped_run, "ivp": refs["ivp"]}
    if lumped_run["status"] == "ok":
        values = lumped_run.pop("values")
        row["diff_to_exact"] = nw.relative_difference(values, refs["exact_rows"])
        stages = lumped_run["stages_best"]
        row["closed_form"] = lumped_run["total"] - lumped_run["stages"]["figures"]
        row["closed_form_best"] = sum(v for k, v in stages.items() if k != "figures")
        if refs["ivp"]["status"] == "ok":
            row["closed_over_ivp"] = row["closed_form"] / refs["ivp"]["total"]
            row["total_over_ivp"] = lumped_run["total"] / refs["ivp"]["total"]
        if full and case.scope == "every":
            row["analyse"] = best_of(analyse_run, (case.text, case.name), limit, repeats)
    print(f" {time_cell(lumped_run)}", flush=True)
    return row


def bench_series(family: str, variants: tuple[str, ...], repeats: int, quick: bool,
                 full: bool) -> list[dict]:
    """Every size, variant and scope of one family; bigger cases skipped after one is over."""
    make = nw.ladder if family == "ladder" else nw.chain
    rows = []
    for variant in variants:
        blocked: dict[str, str | None] = {scope: None for scope in SCOPES}
        for size in SIZES:
            every = make(size, variant != "rest", "every") if family == "ladder" else \
                make(size, variant, "every")
            refs = None
            for scope in SCOPES:
                case = every if scope == "every" else (
                    make(size, variant != "rest", scope) if family == "ladder"
                    else make(size, variant, scope))
                target_key = CASE_TARGETS.get((family, variant, size, scope))
                limit = limit_for(target_key, quick)
                if blocked[scope] is not None:
                    rows.append({"name": case.name, "family": family, "variant": variant,
                                 "size": size, "scope": scope, "states": case.states,
                                 "quantities": len(case.labels), "window_s": case.stop,
                                 "lumped": {"status": "skipped", "reason": blocked[scope]},
                                 "ivp": {"status": "skipped", "reason": blocked[scope]}})
                    continue
                if refs is None:
                    print(f"  {every.name} {variant}: solve_ivp", flush=True)
                    refs = references(every, repeats, limit_for(target_key, quick))
                refs["exact_rows"] = _rows_for(case, every, refs["exact"])
                row = measure(case, refs, repeats, limit, full)
                rows.append(row)
                if row["lumped"]["status"] != "ok":
                    reason = f"{case.name} ({scope}) was {row['lumped']['status']}"
                    blocked[scope] = reason
                    if scope == "last":
                        blocked["every"] = reason
    return rows


def _rows_for(case: nw.Case, every: nw.Case, exact_every: np.ndarray) -> np.ndarray:
    """The exact outputs of ``case``'s quantities, taken from the every-node run."""
    index = {label: k for k, label in enumerate(every.labels)}
    return exact_every[[index[label] for label in case.labels]]


def bench_random(repeats: int, quick: bool, full: bool) -> dict:
    count = RANDOM_COUNT_QUICK if quick else RANDOM_COUNT
    rows, passed_over = [], []
    seed = RANDOM_SEED
    while len(rows) < count:
        case = nw.random_case(seed, 8)
        seed += 1
        if case.notes["periods"] > MOST_PERIODS:
            passed_over.append(case.notes["seed"])
            continue
        limit = limit_for("random_8_nodes", quick)
        refs = references(case, repeats, limit)
        refs["exact_rows"] = refs["exact"]
        rows.append(measure(case, refs, repeats, limit, full))
    big = nw.random_with_elements(BIG_ELEMENTS, BIG_SEED, BIG_NODES)
    limit = limit_for("random_200_elements", quick)
    refs = references(big, repeats, limit)
    refs["exact_rows"] = refs["exact"]
    return {"eight_nodes": rows, "big": measure(big, refs, repeats, limit, full),
            "passed_over": passed_over}


def bench_symbolic(repeats: int, quick: bool) -> dict:
    print("  3-section ladder, R, L, C free", flush=True)
    return best_of(symbolic_run, (SYMBOLIC_LADDER,), limit_for("symbolic_3_sections", quick),
                   repeats)


# --------------------------------------------------------------------------- command line


def cli_command() -> tuple[list[str], dict, str]:
    """How to start the command: the script installed beside this Python, else ``-m``."""
    env = dict(os.environ)
    if not INSTALLED:
        env["PYTHONPATH"] = os.pathsep.join(p for p in (str(SRC), env.get("PYTHONPATH")) if p)
    script = Path(sys.executable).with_name("lumped")
    if INSTALLED and script.exists():
        return [str(script)], env, f"the installed script `{script}`"
    return [sys.executable, "-m", "lumped.cli"], env, f"`{sys.executable} -m lumped.cli`"


def timed_command(argv: list[str], env: dict, repeats: int, limit: float) -> dict:
    times, cpu, code, tail = [], [], None, []
    for _ in range(repeats):
        before = resource.getrusage(resource.RUSAGE_CHILDREN)
        start = time.perf_counter()
        try:
            done = subprocess.run(argv, cwd=ROOT, env=env, capture_output=True, text=True,
                                  timeout=limit)
        except subprocess.TimeoutExpired:
            return {"status": "over limit", "limit": limit}
        times.append(time.perf_counter() - start)
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        cpu.append(after.ru_utime + after.ru_stime - before.ru_utime - before.ru_stime)
        code = done.returncode
        tail = (done.stderr or "").strip().splitlines()[-1:] if code > 1 else []
    return {"status": "ok", "total": min(times), "all": times, "cpu_best": min(cpu),
            "exit_status": code, "stderr_tail": tail}


def bench_cli(repeats: int, quick: bool) -> dict:
    command, env, how = cli_command()
    limit = 60.0 if quick else LIMIT
    repeats = max(repeats, CLI_REPEATS_QUICK)  # start-up times are noisy: never one run
    sympy_import = timed_command([sys.executable, "-c", "import sympy"], env, repeats, limit)
    print(f"  python -c 'import sympy': {time_cell(sympy_import)}", flush=True)
    rows = []
    for path in sorted((ROOT / "examples").glob("*.lumped")):
        check = timed_command([*command, "--check", str(path)], env, repeats, limit)
        run = timed_command([*command, str(path), "--quiet"], env, repeats, limit)
        rows.append({"example": path.name, "check": check, "run": run})
        print(f"  {path.name}: --check {time_cell(check)}, run {time_cell(run)}", flush=True)
    return {"command": how, "import_sympy": sympy_import, "examples": rows}


# --------------------------------------------------------------------------- CAS route


def _cas_child(transform: sympy.Expr, probes: list[float], conn) -> None:
    """Child process: sympy's inverse_laplace_transform, then a few values."""
    from sympy.core.cache import clear_cache

    try:
        clear_cache()
        t = sympy.Symbol("t", positive=True)
        start, start_cpu = time.perf_counter(), time.process_time()
        result = sympy.inverse_laplace_transform(transform, s, t)
        elapsed = time.perf_counter() - start
        conn.send(("cpu", time.process_time() - start_cpu))
        if result.has(sympy.InverseLaplaceTransform):
            conn.send(("unevaluated", elapsed, None))
            return
        conn.send(("ok", elapsed, sympy.count_ops(result)))
        values = [complex(result.subs(t, sympy.Float(p, 30)).evalf(20)) for p in probes]
        conn.send(("values", values))
    except Exception as error:  # the CAS route failing is a result, not a crash
        conn.send(("error", None, f"{type(error).__name__}: {error}"[:200]))


def run_cas(transform: sympy.Expr, limit: float, probes: list[float]) -> dict:
    """Run the CAS route in a forked child with a time limit; kill it at the limit."""
    ctx = multiprocessing.get_context("fork")
    parent, child = ctx.Pipe(duplex=False)
    proc = ctx.Process(target=_cas_child, args=(transform, probes, child), daemon=True)
    wall = time.perf_counter()
    proc.start()
    child.close()
    out: dict = {"limit": limit}
    message = None
    if parent.poll(limit + 5.0):  # the child times itself; allow for the fork
        try:
            message = parent.recv()
            if message[0] == "cpu":
                out["cpu_seconds"] = message[1]
                message = parent.recv() if parent.poll(10.0) else None
        except EOFError:  # the child died without a word
            proc.join(5.0)
            message = ("error", None, f"child process ended (exit code {proc.exitcode})")
    if message is not None:
        status, elapsed, info = message
        out.update(status=status, seconds=elapsed)
        if status == "ok":
            out["result_ops"] = info
            if parent.poll(60.0):
                try:
                    out["values"] = parent.recv()[1]
                except EOFError:
                    out["values_note"] = "sampling the CAS result failed; not compared"
            else:
                out["values_note"] = "sampling the CAS result took over 60 s; not compared"
        elif status == "error":
            out["error"] = info
        if elapsed is not None and elapsed > limit:
            out.update(status="time limit", seconds=None, over_limit_seconds=elapsed)
    else:
        out.update(status="time limit", seconds=None)
    out["wall"] = time.perf_counter() - wall
    if proc.is_alive():
        proc.kill()
    proc.join(10.0)
    parent.close()
    return out


def bench_small_cas(repeats: int) -> list[dict]:
    """Small ladders and chains at rest, last node: lumped against sympy's inversion."""
    rows = []
    cases = [nw.ladder(n, False, "last") for n in SMALL_LADDERS]
    cases += [nw.chain(n, "rest", "last") for n in SMALL_CHAINS]
    for case in cases:
        print(f"  {case.name}: lumped, then the CAS route (limit {CAS_LIMIT:.0f} s)", flush=True)
        timing = best_of(pipeline, (case.text, case.name, None), LIMIT, repeats)
        lumped.clear_caches()
        net = loads(case.text, case.name)
        transform = rationalise(assemble(net).response(net.watches[0]).transform)
        tr = invert(transform, s)
        probes = [case.stop * f for f in (0.1, 0.3, 0.6)]
        cas = run_cas(transform, CAS_LIMIT, probes)
        row = {"name": case.name, "states": case.states, "lumped": timing, "cas": cas,
               "modes": len(tr.modes)}
        if "values" in cas:
            exact = nw.exact_outputs(case, np.linspace(0.0, case.stop, IVP_POINTS))
            span = float(np.ptp(exact)) or 1.0
            got = np.array([v.real for v in cas["values"]])
            cas["max_rel_diff_to_lumped"] = float(
                np.max(np.abs(got - tr.evaluate(np.array(probes)))) / span)
        if timing["status"] == "ok":
            if cas.get("status") == "ok":
                row["ratio"], row["ratio_lower_bound"] = cas["seconds"] / timing["total"], False
            elif cas.get("status") == "time limit":
                row["ratio"], row["ratio_lower_bound"] = CAS_LIMIT / timing["total"], True
        rows.append(row)
    return rows


def quartic_denominator() -> tuple[list[int], dict]:
    """s^4 + 3 s^3 + 5 s^2 + 4 s + 3: stable, irreducible over Q (so no rational roots)."""
    coeffs = [1, 3, 5, 4, 3]  # highest power first
    poly = fmpz_poly(list(reversed(coeffs)))
    factors = poly.factor()[1]
    irreducible = len(factors) == 1 and factors[0][1] == 1 and factors[0][0].degree() == 4
    # rational root test: p | 3, q | 1
    candidates = [sympy.Integer(v) for v in (1, -1, 3, -3)]
    x = sympy.Symbol("x")
    expr = sum(c * x ** (4 - i) for i, c in enumerate(coeffs))
    rational_roots = [c for c in candidates if expr.subs(x, c) == 0]
    # Hurwitz determinants of a0 s^4 + a1 s^3 + a2 s^2 + a3 s + a4
    a0, a1, a2, a3, a4 = (sympy.Integer(c) for c in coeffs)
    hurwitz = sympy.Matrix([[a1, a3, 0, 0], [a0, a2, a4, 0], [0, a1, a3, 0], [0, a0, a2, a4]])
    minors = [hurwitz[:k, :k].det() for k in range(1, 5)]
    roots = np.roots(coeffs)
    checks = {"irreducible_over_Q": irreducible, "rational_roots": [str(r) for r in rational_roots],
              "hurwitz_minors": [int(m) for m in minors],
              "stable": all(m > 0 for m in minors),
              "max_real_part": float(max(roots.real))}
    return coeffs, checks


def _invert_run(transform: sympy.Expr) -> dict:
    start, start_cpu = time.perf_counter(), time.process_time()
    invert(transform, s)
    return {"total": time.perf_counter() - start, "cpu": time.process_time() - start_cpu}


def bench_quartic(repeats: int, cas: bool) -> dict:
    coeffs, checks = quartic_denominator()
    den = sum(sympy.Integer(c) * s ** (4 - i) for i, c in enumerate(coeffs))
    transform = 1 / den
    print("  quartic: lumped.inversion.invert", flush=True)
    inv = best_of(_invert_run, (transform,), LIMIT, max(repeats, 5))
    out = {"transform": f"1/({den})", "checks": checks, "invert": inv}
    if cas and inv["status"] == "ok":
        print(f"  quartic: CAS route (limit {CAS_LIMIT_QUARTIC:.0f} s)", flush=True)
        tr = invert(transform, s)
        probes = [1.0, 3.0, 6.0]
        cas_out = run_cas(transform, CAS_LIMIT_QUARTIC, probes)
        if "values" in cas_out:
            exact = tr.evaluate(np.array(probes))
            got = np.array([v.real for v in cas_out["values"]])
            cas_out["max_abs_diff_to_lumped"] = float(np.max(np.abs(got - exact)))
        out["cas"] = cas_out
        if cas_out["status"] == "ok":
            out["ratio"], out["ratio_lower_bound"] = cas_out["seconds"] / inv["total"], False
        elif cas_out["status"] == "time limit":
            out["ratio"], out["ratio_lower_bound"] = CAS_LIMIT_QUARTIC / inv["total"], True
    else:
        out["cas"] = {"status": "not run (--quick)"}
    return out


# --------------------------------------------------------------------------- samples, figures


def in_process_best(func: Callable[[], object], repeats: int) -> dict:
    """Best wall and CPU time of ``func`` run here, caches cleared before each run."""
    times, cpu = [], []
    for _ in range(repeats):
        lumped.clear_caches()
        gc.collect()
        start, start_cpu = time.perf_counter(), time.process_time()
        func()
        times.append(time.perf_counter() - start)
        cpu.append(time.process_time() - start_cpu)
    return {"best": min(times), "all": times, "cpu_best": min(cpu)}


def bench_samples_and_figures(repeats: int) -> tuple[dict, dict]:
    """10^6 samples and the figures of the 20-section ladder's last node (in this process)."""
    case = nw.ladder(20, False, "last")
    lumped.clear_caches()
    net = loads(case.text, case.name)
    response = assemble(net).response(net.watches[0])
    tr = invert(rationalise(response.transform), s)
    count = 10**6
    uniform = np.linspace(0.0, case.stop, count)
    scattered = np.sort(np.random.default_rng(1).uniform(0.0, case.stop, count))
    tr.evaluate(uniform[:1000])
    samples = {"samples": count, "modes": len(tr.modes)}
    for name, grid in (("uniform", uniform), ("scattered", scattered)):
        timing = in_process_best(lambda grid=grid: tr.evaluate(grid), repeats)
        samples[f"{name}_best"], samples[f"{name}_cpu_best"] = timing["best"], timing["cpu_best"]
    samples["derivative1_uniform_best"] = in_process_best(lambda: tr.evaluate(uniform, 1),
                                                          repeats)["best"]
    timing = in_process_best(lambda: compute_figures(tr, 0.0, case.stop), repeats)
    figures = {"best": timing["best"], "all": timing["all"], "cpu_best": timing["cpu_best"],
               "modes": len(tr.modes)}
    return samples, figures


# --------------------------------------------------------------------------- machine


def cpu_model() -> str:
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.lower().startswith("model name"):
                return line.split(":", 1)[1].strip()
    except OSError:
        pass
    return platform.processor() or "unknown"


def versions() -> dict:
    found = {"python": platform.python_version(), "lumped": lumped.__version__}
    for dist in ("sympy", "python-flint", "numpy", "scipy", "mpmath", "lark", "pint"):
        try:
            found[dist] = metadata.version(dist)
        except metadata.PackageNotFoundError:
            found[dist] = "not installed"
    return found


def git_state() -> str:
    try:
        head = subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=ROOT,
                              capture_output=True, text=True, timeout=10).stdout.strip()
        dirty = subprocess.run(["git", "status", "--porcelain", "--", "src"], cwd=ROOT,
                               capture_output=True, text=True, timeout=10).stdout.strip()
        return f"{head}{' + uncommitted changes in src/' if dirty else ''}"
    except (OSError, subprocess.SubprocessError):
        return "unknown"


def warm_up() -> float:
    """Import and build once what every later run shares (parser, unit registry, modules)."""
    start = time.perf_counter()
    for text in (nw.ladder(1, True).text, nw.chain(1, "gravity").text,
                 nw.random_case(RANDOM_SEED, 8).text):
        pipeline(text, "warm-up", np.linspace(0.0, 1e-3, 5))
        analyse(loads(text, "warm-up"))
    symbolic_run(SYMBOLIC_LADDER.replace("let C in F", "let C = 1 uF"))
    lumped.clear_caches()
    return time.perf_counter() - start


# --------------------------------------------------------------------------- targets


def _find(rows: list[dict], family: str, variant: str, size: int, scope: str) -> dict | None:
    for row in rows:
        if (row["family"], row["variant"], row["size"], row["scope"]) == (
                family, variant, size, scope):
            return row
    return None


def initial_cost(rows: list[dict], row: dict) -> tuple[float | None, bool]:
    """This row's time over the same network at rest (a lower bound when over the limit)."""
    if row["variant"] == "rest":
        return None, False
    rest = _find(rows, row["family"], "rest", row["size"], row["scope"])
    if rest is None or rest["lumped"]["status"] != "ok":
        return None, False
    if row["lumped"]["status"] == "ok":
        return row["lumped"]["total"] / rest["lumped"]["total"], False
    if row["lumped"]["status"] == "over limit":
        return row["lumped"]["limit"] / rest["lumped"]["total"], True
    return None, False


def targets(report: dict) -> list[dict]:
    rows_out: list[dict] = []

    def row(target: str, measured: str, result: str, cpu: float | None = None) -> None:
        rows_out.append({"target": target, "measured": measured, "cpu": fmt_time(cpu),
                         "verdict": result})

    series = report["ladders"] + report["chains"]
    bound = TARGETS["initial_cost_ratio"]
    for family, words in (("ladder", "RLC ladders"), ("chain", "mass chains")):
        worst, worst_row, lower = None, None, False
        for r in series:
            if r["family"] != family or r["variant"] != "initial":
                continue
            ratio, is_bound = initial_cost(series, r)
            if ratio is not None and (worst is None or ratio > worst):
                worst, worst_row, lower = ratio, r, is_bound
        text = f"initial conditions on every store ≤ {bound}× the same {words} at rest"
        if worst is None:
            row(text, "not measured", "MISS (not measured)")
        else:
            scope = "every node" if worst_row["scope"] == "every" else "last node"
            where = f"{worst_row['name']}, {scope}"
            row(text, f"worst {fmt_ratio(worst, lower)} ({where})",
                verdict(worst, bound, lower_bound=lower))
    for (family, variant, size, scope), key in CASE_TARGETS.items():
        r = _find(series, family, variant, size, scope)
        words = {"ladder": f"{size} RLC sections", "chain": f"{size}-mass chain"}[family]
        how = {"initial": "initial conditions on every store", "gravity": "under gravity",
               "rest": "at rest"}[variant]
        text = f"{words}, {how}, every node, closed form + figures < {TARGETS[key]:g} s"
        if r is None:
            row(text, "not measured", "MISS (not measured)")
            continue
        lumped_run = r["lumped"]
        if lumped_run["status"] == "ok":
            row(text, fmt_time(lumped_run["total"]), verdict(lumped_run["total"], TARGETS[key]),
                lumped_run.get("cpu_best"))
        else:
            row(text, status_text(lumped_run), "MISS")
    bound = TARGETS["ladder20_closed_over_ivp"]
    for variant in ("rest", "initial"):
        r = _find(series, "ladder", variant, 20, "every")
        text = (f"20-section ladder{' with initial conditions' if variant == 'initial' else ''}, "
                f"every node's closed form ≤ {bound:g}× solve_ivp for the same nodes")
        if r is None or "closed_over_ivp" not in r:
            reason = status_text(r["lumped"]) if r else None
            row(text, reason or "not measured", "MISS")
        else:
            row(text, f"{fmt_ratio(r['closed_over_ivp'])} ({fmt_time(r['closed_form'])} / "
                f"{fmt_time(r['ivp']['total'])})", verdict(r["closed_over_ivp"], bound))
    cli = report["cli"]
    base = cli["import_sympy"]
    if base["status"] == "ok" and cli["examples"]:
        for key, what, word in (("check", "check_over_import_sympy", "`lumped --check`"),
                                ("run", "run_over_import_sympy", "a full run (`--quiet`)")):
            bound = TARGETS[what]
            measured = [(e[key]["total"] / base["total"], e["example"]) for e in cli["examples"]
                        if e[key]["status"] == "ok"]
            text = (f"{word} on every example ≤ {bound:g}× `python -c \"import sympy\"` "
                    f"({fmt_time(base['total'])})")
            if len(measured) < len(cli["examples"]):
                row(text, "some runs over the limit", "MISS")
            else:
                worst, example = max(measured)
                row(text, f"worst {fmt_ratio(worst)} ({example})", verdict(worst, bound))
    sym = report["symbolic"]
    bound = TARGETS["symbolic_3_sections"]
    text = f"3-section ladder, R, L, C free: transfer function + stability < {bound:g} s"
    if sym["status"] == "ok":
        row(text, f"{fmt_time(sym['total'])} ({sym['stability']})",
            verdict(sym["total"], bound), sym.get("cpu_best"))
    else:
        row(text, status_text(sym), "MISS")
    rnd = report["random"]
    bound = TARGETS["random_8_nodes"]
    text = (f"random 8-node networks with initial conditions, every node with figures "
            f"< {bound:g} s each ({len(rnd['eight_nodes'])} of them)")
    done = [r for r in rnd["eight_nodes"] if r["lumped"]["status"] == "ok"]
    if len(done) < len(rnd["eight_nodes"]):
        row(text, f"{len(rnd['eight_nodes']) - len(done)} over the limit or failed", "MISS")
    else:
        worst = max(r["lumped"]["total"] for r in done)
        median = statistics.median(r["lumped"]["total"] for r in done)
        row(text, f"worst {fmt_time(worst)}, median {fmt_time(median)}",
            verdict(worst, bound), max(r["lumped"]["cpu_best"] for r in done))
    big = rnd["big"]
    bound = TARGETS["random_200_elements"]
    text = f"{big['size']}-element random network, every node with figures < {bound:g} s"
    if big["lumped"]["status"] == "ok":
        row(text, fmt_time(big["lumped"]["total"]), verdict(big["lumped"]["total"], bound),
            big["lumped"]["cpu_best"])
    else:
        row(text, status_text(big["lumped"]), "MISS")
    return rows_out


def earlier_targets(report: dict) -> list[dict]:
    rows_out: list[dict] = []

    def row(target: str, measured: str, result: str, cpu: float | None = None) -> None:
        rows_out.append({"target": target, "measured": measured, "cpu": fmt_time(cpu),
                         "verdict": result})

    big = _find(report["ladders"], "ladder", "rest", 20, "every")
    if big is not None and big["lumped"]["status"] == "ok":
        st, cpu = big["lumped"]["stages_best"], big["lumped"]["stages_cpu_best"]
        parts = ("parse", "assemble", "responses")
        s_domain = sum(st[k] for k in parts)
        bound = EARLIER_TARGETS["s_domain_40_state"]
        row(f"40-state ladder, every node, in s (parse + assemble + responses) < {bound} s",
            fmt_time(s_domain), verdict(s_domain, bound), sum(cpu[k] for k in parts))
        closed = s_domain + st["inversion"]
        bound = EARLIER_TARGETS["closed_form_40_state"]
        row(f"40-state ladder, every node, closed form (… + inversions) < {bound} s",
            fmt_time(closed), verdict(closed, bound),
            sum(cpu[k] for k in (*parts, "inversion")))
    q = report["quartic"]
    bound = EARLIER_TARGETS["quartic_ratio"]
    text = f"4th-order irreducible: CAS time / lumped invert time > {bound:.0f}×"
    if q.get("ratio") is not None:
        row(text, fmt_ratio(q["ratio"], q["ratio_lower_bound"]),
            verdict(q["ratio"], bound, above=True))
    else:
        row(text, f"CAS route {q['cas'].get('status')}", "not judged")
    smp = report["samples"]
    bound = EARLIER_TARGETS["samples_1e6"]
    for name, words in (("uniform", "uniform grid"), ("scattered", "sorted random times")):
        row(f"10^6 samples of a {smp['modes']}-mode response, {words} < {bound} s",
            fmt_time(smp[f"{name}_best"]), verdict(smp[f"{name}_best"], bound),
            smp[f"{name}_cpu_best"])
    fig = report["figures"]
    bound = EARLIER_TARGETS["figures_40_state"]
    row(f"figures of the 40-state response < {bound} s", fmt_time(fig["best"]),
        verdict(fig["best"], bound), fig["cpu_best"])
    runs = [e["run"] for e in report["cli"]["examples"] if e["run"]["status"] == "ok"]
    if runs:
        bound = EARLIER_TARGETS["cli_example"]
        worst = max(report["cli"]["examples"],
                    key=lambda e: e["run"].get("total", math.inf))
        row(f"CLI on every example, start-up included, < {bound} s each",
            f"slowest {time_cell(worst['run'])} ({worst['example']})",
            verdict(worst["run"].get("total"), bound) if worst["run"]["status"] == "ok"
            else "MISS", max(r["cpu_best"] for r in runs))
    return rows_out


# --------------------------------------------------------------------------- report


def _target_table(rows: list[dict]) -> list[str]:
    lines = ["| target | measured (wall) | CPU time | verdict (on wall time) |",
             "|---|---|---|---|"]
    lines += [f"| {r['target']} | {r['measured']} | {r['cpu']} | {r['verdict']} |"
              for r in rows]
    return lines


def _series_table(rows: list[dict], full: bool) -> list[str]:
    lines = ["| case | variant | scope (quantities) | parse | assemble | responses | inversion "
             "| figures | total (CPU) | vs at rest | solve_ivp | closed form ÷ solve_ivp "
             "| diff vs exact (lumped / solve_ivp) |" + (" analyse() |" if full else ""),
             "|---|---|---|---|---|---|---|---|---|---|---|---|---|" + ("---|" if full else "")]
    for r in rows:
        run = r["lumped"]
        scope = f"{'last node' if r['scope'] == 'last' else 'every node'} ({r['quantities']})"
        head = f"| {r['name']} | {r['variant']} | {scope} "
        ivp = r.get("ivp") or {}
        ivp_cell = time_cell(ivp) if ivp else "–"
        if run["status"] != "ok":
            ratio, lower = initial_cost(rows, r)
            cells = [status_text(run), "", "", "", "", "", fmt_ratio(ratio, lower), ivp_cell,
                     "", ""] + ([""] if full else [])
            lines.append(head + "| " + " | ".join(cells) + " |")
            continue
        st = run["stages"]
        ratio, lower = initial_cost(rows, r)
        diff = f"{r['diff_to_exact']:.1e} / " + (f"{ivp['diff_to_exact']:.1e}"
                                                 if "diff_to_exact" in ivp else "–")
        line = (head + f"| {fmt_time(st['parse'])} | {fmt_time(st['assemble'])} "
                f"| {fmt_time(st['responses'])} | {fmt_time(st['inversion'])} "
                f"| {fmt_time(st['figures'])} | {fmt_time(run['total'])} "
                f"({fmt_time(run.get('cpu_best'))}) | {fmt_ratio(ratio, lower)} | {ivp_cell} "
                f"| {fmt_ratio(r.get('closed_over_ivp'))} | {diff} |")
        if full:
            line += f" {time_cell(r.get('analyse'))} |"
        lines.append(line)
    return lines


def markdown(report: dict) -> str:
    m = report["machine"]
    full = not report["quick"]
    lines = [
        "# lumped benchmark" + (" (--quick)" if report["quick"] else ""),
        "",
        f"- date: {report['date']}",
        f"- machine: {m['platform']}; CPU {m['cpu']}; {m['cores']} cores; "
        f"{m['memory_gb']:.1f} GB",
        "- versions: " + ", ".join(f"{k} {v}" for k, v in m["versions"].items()),
        f"- source: git {m['git']}",
        "- thread variables for this process: "
        + ", ".join(f"{k}={v}" for k, v in m["threads"].items()),
        f"- timings: best of {report['repeats']} (time.perf_counter; CPU time by "
        "time.process_time beside it); each run in a fresh forked child with lumped's and "
        "sympy's caches cleared (`lumped.clear_caches()`), killed at its time limit "
        f"({report['limit_text']}); the whole run took {fmt_time(report['elapsed_s'])}",
        f"- load average (1, 5, 15 min) at start {report['load_start']}, at end "
        f"{report['load_end']}, on {m['cores']} cores: other work on the machine inflates "
        "wall times, CPU times less so",
        "",
        "## Targets (the speed issue)",
        "",
        *_target_table(report["targets"]),
        "",
        "## Earlier targets",
        "",
        *_target_table(report["earlier_targets"]),
        "",
        "## RLC ladders and mass chains",
        "",
        "Stages: netlist text → parse + validate → assemble + solve → responses → inversion "
        "→ figures, for the last node or for every node. 'vs at rest' is the time over the "
        f"same network and scope at rest. solve_ivp: {IVP_METHOD}, rtol {IVP_RTOL:g}, atol "
        f"1e-12 × the largest state, {IVP_POINTS} points, on hand-written state equations "
        "(every node's outputs; the same integration serves the last node). 'diff vs exact': "
        "largest |difference| over each quantity's range against the exact matrix-exponential "
        "solution of the same equations. Bigger sizes are not run after a smaller one was "
        "over the limit.",
        "",
        "### RLC ladders (1 V step; 1 Ω + 1 µH series, 1 µF shunt per section; 1 Ω load)",
        "",
        *_series_table(report["ladders"], full),
        "",
        "### Mass chains (1 kg, 1 kN/m, 50 N·s/m per link; 1 N step on m1)",
        "",
        *_series_table(report["chains"], full),
        "",
        f"## Random networks with initial conditions (seeds from {RANDOM_SEED}; every node)",
        "",
        "State equations from `tests/reference/random_networks.py` (its state-variable "
        "reference, independent of lumped); the window is that reference's time scale "
        "(five of the slowest time constants). Seeds passed over (a window holding more "
        f"than {MOST_PERIODS:.0e} periods of one ringing, which the tool refuses): "
        + (", ".join(str(x) for x in report["random"]["passed_over"]) or "none") + ".",
        "",
        *_series_table(report["random"]["eight_nodes"] + [report["random"]["big"]], full),
    ]
    sym = report["symbolic"]
    lines += ["", "## Symbolic: 3-section RLC ladder, R, L and C free", ""]
    if sym["status"] == "ok":
        lines.append(
            f"- parse + assemble {fmt_time(sym['stages_best']['parse + assemble'])}, transfer "
            f"function + stability {fmt_time(sym['stages_best']['transfer function + stability'])}"
            f"; total {fmt_time(sym['total'])} (CPU {fmt_time(sym['cpu_best'])}); denominator of "
            f"degree {sym['degree']} in {', '.join(sym['parameters'])}; stability "
            f"'{sym['stability']}'")
    else:
        lines.append(f"- {status_text(sym)}")
    cli = report["cli"]
    base = cli["import_sympy"]
    runs = max(report["repeats"], CLI_REPEATS_QUICK)
    lines += ["", f"## Command-line start-up (best of {runs}, start-up included)", "",
              f"Command: {cli['command']}. `python -c \"import sympy\"`: {time_cell(base)} "
              f"(CPU {fmt_time(base.get('cpu_best'))}).", "",
              "| example | `--check` | ÷ import sympy | full run `--quiet` | ÷ import sympy "
              "| exit status |", "|---|---|---|---|---|---|"]
    for e in cli["examples"]:
        cells = []
        for key in ("check", "run"):
            result = e[key]
            ratio = (result["total"] / base["total"]
                     if result["status"] == "ok" and base["status"] == "ok" else None)
            cells += [f"{time_cell(result)} (CPU {fmt_time(result.get('cpu_best'))})",
                      fmt_ratio(ratio)]
        lines.append(f"| {e['example']} | " + " | ".join(cells)
                     + f" | {e['run'].get('exit_status', '–')} |")
    if report.get("small"):
        lines += ["", "## Small cases against the CAS route", "",
                  f"sympy `inverse_laplace_transform(X, s, t)` on the last node's X(s), t "
                  f"positive, in a forked child killed at {CAS_LIMIT:.0f} s; ratio over lumped's "
                  "last-node time (closed form and figures).", "",
                  "| case | states | modes | lumped | CAS route | CAS ÷ lumped |",
                  "|---|---|---|---|---|---|"]
        for r in report["small"]:
            cas = r["cas"]
            status = cas.get("status", "?")
            if status == "ok":
                cas_text = fmt_time(cas["seconds"])
                if "max_rel_diff_to_lumped" in cas:
                    cas_text += f" (agrees to {cas['max_rel_diff_to_lumped']:.1e})"
            elif status == "time limit":
                cas_text = f"time limit ({cas['limit']:.0f} s)"
            elif status == "error":
                cas_text = f"failed after {fmt_time(cas.get('seconds'))}: {cas.get('error', '')}"
            elif status == "unevaluated":
                cas_text = f"failed (unevaluated) after {fmt_time(cas['seconds'])}"
            else:
                cas_text = status
            lines.append(f"| {r['name']} | {r['states']} | {r['modes']} "
                         f"| {time_cell(r['lumped'])} | {cas_text} "
                         f"| {fmt_ratio(r.get('ratio'), r.get('ratio_lower_bound', False))} |")
    q = report["quartic"]
    cas = q["cas"]
    lines += [
        "",
        "## 4th-order irreducible case",
        "",
        f"X(s) = {q['transform']}; irreducible over Q: {q['checks']['irreducible_over_Q']}, "
        f"rational roots: {q['checks']['rational_roots'] or 'none'}, Hurwitz minors "
        f"{q['checks']['hurwitz_minors']} (stable: {q['checks']['stable']}).",
        "",
        f"- `lumped.inversion.invert`: {time_cell(q['invert'])}",
        f"- sympy `inverse_laplace_transform`: {cas.get('status')}"
        + (f", {fmt_time(cas['seconds'])}" if cas.get("seconds") else "")
        + (f", limit {cas['limit']:.0f} s" if cas.get("status") == "time limit" else "")
        + (f" ({cas['error']})" if cas.get("error") else "")
        + (f"; max |difference| to lumped at t = 1, 3, 6 s: "
           f"{cas['max_abs_diff_to_lumped']:.1e}" if "max_abs_diff_to_lumped" in cas else ""),
        f"- ratio: {fmt_ratio(q.get('ratio'), q.get('ratio_lower_bound', False))}",
        "",
        "## Samples and figures (20-section ladder at rest, last node, in this process)",
        "",
        f"- 10^6 samples, {report['samples']['modes']} modes: uniform grid "
        f"{fmt_time(report['samples']['uniform_best'])}, sorted random times "
        f"{fmt_time(report['samples']['scattered_best'])}, first derivative (uniform) "
        f"{fmt_time(report['samples']['derivative1_uniform_best'])}",
        f"- `compute_figures` on the 40-state response: {fmt_time(report['figures']['best'])}",
    ]
    if report.get("notes"):
        lines += ["", "## Notes", ""] + [f"- {n}" for n in report["notes"]]
    return "\n".join(lines) + "\n"


def jsonable(value):
    if isinstance(value, dict):
        return {k: jsonable(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [jsonable(v) for v in value]
    if isinstance(value, np.ndarray):
        return f"array of shape {value.shape}"
    if isinstance(value, complex):
        return [value.real, value.imag]
    if isinstance(value, (np.floating, np.integer)):
        return value.item()
    if isinstance(value, float) and not math.isfinite(value):
        return str(value)
    return value


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m tests.benchmarks",
                                     description="Speed benchmark of lumped.")
    parser.add_argument("--quick", action="store_true",
                        help="one run each, short time limits, no CAS runs (results still "
                             "written)")
    args = parser.parse_args(argv)
    quick = args.quick
    repeats = 1 if quick else REPEATS
    began = time.perf_counter()
    report: dict = {
        "date": datetime.datetime.now(datetime.UTC).strftime("%Y-%m-%d %H:%M UTC"),
        "repeats": repeats,
        "quick": quick,
        "limit_text": (f"{LIMIT_QUICK:.0f} s, or 3× the case's target when more"
                       if quick else f"{LIMIT:.0f} s"),
        "machine": {
            "platform": platform.platform(), "cpu": cpu_model(), "cores": os.cpu_count(),
            "memory_gb": os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES") / 2**30,
            "versions": versions(), "git": git_state(),
            "threads": {k: os.environ[k] for k in THREAD_VARIABLES},
        },
        "notes": [],
        "load_start": [round(x, 2) for x in os.getloadavg()],
    }
    print(f"load average {report['load_start']}; warming up", flush=True)
    report["warm_up_s"] = warm_up()
    report["notes"].append(
        f"warm-up in the parent before any timing (imports, the parser, the unit registry): "
        f"{fmt_time(report['warm_up_s'])}; the forked runs inherit it, the CLI rows do not")

    print("1. RLC ladders", flush=True)
    report["ladders"] = bench_series("ladder", LADDER_VARIANTS, repeats, quick, not quick)
    print("2. mass chains", flush=True)
    report["chains"] = bench_series("chain", CHAIN_VARIANTS, repeats, quick, not quick)
    print("3. random networks", flush=True)
    report["random"] = bench_random(repeats, quick, not quick)
    print("4. symbolic transfer function", flush=True)
    report["symbolic"] = bench_symbolic(repeats, quick)
    print("5. command-line start-up", flush=True)
    report["cli"] = bench_cli(repeats, quick)
    if not quick:
        print("6. small cases against the CAS route", flush=True)
        report["small"] = bench_small_cas(repeats)
    print("7. 4th-order irreducible case", flush=True)
    report["quartic"] = bench_quartic(repeats, not quick)
    print("8. samples and figures", flush=True)
    report["samples"], report["figures"] = bench_samples_and_figures(repeats)

    report["maxrss_mb_self"] = maxrss_mb()
    report["maxrss_mb_children"] = maxrss_mb(resource.RUSAGE_CHILDREN)
    report["notes"].append(
        f"peak resident memory: this process {report['maxrss_mb_self']:.0f} MB, largest child "
        f"{report['maxrss_mb_children']:.0f} MB (a forked child counts the pages it shares "
        "with this process)")
    report["notes"].append(
        "a forked child pays for the first touch of pages it shares with the parent; "
        "measured on small cases that is a few milliseconds")
    report["elapsed_s"] = time.perf_counter() - began
    report["load_end"] = [round(x, 2) for x in os.getloadavg()]
    report["targets"] = targets(report)
    report["earlier_targets"] = earlier_targets(report)
    text = markdown(report)
    write_atomic(RESULTS / "latest.json", json.dumps(jsonable(report), indent=2) + "\n")
    write_atomic(RESULTS / "latest.md", text)
    print()
    print(text)
    return 0


if __name__ == "__main__":
    sys.exit(main())
