"""Speed benchmark of lumped against the general CAS route and a numerical integrator.

Run from the repository root::

    python -m tests.benchmarks            # everything (about 10 minutes)
    python -m tests.benchmarks --quick    # no CAS runs, one repeat: a smoke run

Results go to ``tests/benchmarks/results/latest.json`` and ``latest.md``.
Every netlist is generated here; the reference state equations are derived
by hand from the same topologies, independently of lumped.
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
import subprocess  # noqa: E402
import sys  # noqa: E402
import tempfile  # noqa: E402
import time  # noqa: E402
import tracemalloc  # noqa: E402
from collections.abc import Callable  # noqa: E402
from importlib import metadata  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402
import scipy.integrate  # noqa: E402
import scipy.linalg  # noqa: E402
import sympy  # noqa: E402
from sympy.core.cache import clear_cache  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]
RESULTS = Path(__file__).resolve().parent / "results"
SRC = ROOT / "src"

try:
    import lumped
except ImportError:
    sys.path.insert(0, str(SRC))
    import lumped

from flint import fmpz_poly  # noqa: E402

from lumped.algebra.exact import rationalise  # noqa: E402
from lumped.analysis import analyse  # noqa: E402
from lumped.api import loads  # noqa: E402
from lumped.constants import s  # noqa: E402
from lumped.figures import compute_figures  # noqa: E402
from lumped.inversion import invert  # noqa: E402
from lumped.network import assemble  # noqa: E402

REPEATS = 3
CAS_LIMIT = 60.0  # seconds per ladder/chain case
CAS_LIMIT_QUARTIC = 300.0
CAS_MAX_ORDER = 8
IVP_POINTS = 2001
IVP_RTOL = 1e-10
IVP_METHOD = "DOP853"

# Ladder: series R + L per section, shunt C to ground, load resistor at the end.
R_SERIES, L_SERIES, C_SHUNT, R_LOAD, V_STEP = 1.0, 1e-6, 1e-6, 1.0, 1.0
# Chain: equal masses, each link a spring and a damper; the last mass to the frame.
MASS, STIFFNESS, DAMPING, F_STEP = 1.0, 1000.0, 50.0, 1.0

LADDERS = (1, 2, 5, 10, 20)
CHAINS = (3, 6)

TARGETS = {
    "s_domain_40_state": 0.5,
    "closed_form_40_state": 1.0,
    "quartic_ratio": 1000.0,
    "samples_1e6": 0.1,
    "figures_40_state": 0.2,
    "cli_example": 2.0,
}


# --------------------------------------------------------------------------- helpers


def best_of(func: Callable[[], object], repeats: int = REPEATS) -> dict:
    """Best and first wall time of ``func`` over ``repeats`` runs (sympy cache cleared first)."""
    times, cpu = [], []
    for _ in range(repeats):
        clear_cache()
        gc.collect()
        start, start_cpu = time.perf_counter(), time.process_time()
        func()
        times.append(time.perf_counter() - start)
        cpu.append(time.process_time() - start_cpu)
    return {"best": min(times), "first": times[0], "all": times, "cpu_best": min(cpu)}


def maxrss_mb(who: int = resource.RUSAGE_SELF) -> float:
    return resource.getrusage(who).ru_maxrss / 1024.0  # kilobytes on Linux


def fmt_time(seconds: float | None) -> str:
    if seconds is None:
        return "–"
    if seconds < 1e-3:
        return f"{seconds * 1e6:.0f} µs"
    if seconds < 1.0:
        return f"{seconds * 1e3:.3g} ms"
    return f"{seconds:.3g} s"


def fmt_ratio(value: float | None, lower_bound: bool = False) -> str:
    if value is None:
        return "–"
    text = f"{value:,.0f}×" if value >= 100 else f"{value:.3g}×"
    return ("≥ " if lower_bound else "") + text


def verdict(measured: float | None, target: float, above: bool = False) -> str:
    if measured is None:
        return "MISS (not measured)"
    ok = measured > target if above else measured < target
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


def round_up(value: float, digits: int = 2) -> float:
    """``value`` rounded up to ``digits`` significant digits."""
    exponent = math.floor(math.log10(value)) - digits + 1
    return math.ceil(value / 10**exponent) * 10**exponent


def window_of(a: np.ndarray) -> float:
    """Six of the slowest time constants of ``dx/dt = A x``, rounded up."""
    slowest = max(-1.0 / ev.real for ev in np.linalg.eigvals(a))
    return round_up(6.0 * slowest)


# --------------------------------------------------------------------------- cases


def ladder_matrices(n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """State equations of an n-section ladder: x = (i_1..i_n, v_1..v_n), u = source voltage.

    L di_k/dt = v_{k-1} - R i_k - v_k  (v_0 = u);  C dv_k/dt = i_k - i_{k+1},
    the last node loaded by R_LOAD instead of a next section.  Output: v_n.
    """
    a = np.zeros((2 * n, 2 * n))
    b = np.zeros(2 * n)
    c = np.zeros(2 * n)
    for k in range(n):
        i, v = k, n + k
        a[i, i] = -R_SERIES / L_SERIES
        a[i, v] = -1.0 / L_SERIES
        if k == 0:
            b[i] = 1.0 / L_SERIES
        else:
            a[i, v - 1] = 1.0 / L_SERIES
        a[v, i] = 1.0 / C_SHUNT
        if k < n - 1:
            a[v, i + 1] = -1.0 / C_SHUNT
        else:
            a[v, v] = -1.0 / (R_LOAD * C_SHUNT)
    c[2 * n - 1] = 1.0
    return a, b, c


def ladder_text(n: int, stop: float) -> str:
    lines = [f"# generated: {n}-section RLC ladder, 1 V step",
             "voltage source V from n0 to ground step 1 V"]
    for k in range(1, n + 1):
        lines += [f"resistor  R{k} from n{k - 1} to a{k} 1 ohm",
                  f"inductor  L{k} from a{k} to n{k} 1 uH",
                  f"capacitor C{k} from n{k} to ground 1 uF"]
    lines += [f"resistor  Rload from n{n} to ground 1 ohm",
              f"watch voltage at n{n}",
              f"window {stop:.6g} s"]
    return "\n".join(lines) + "\n"


def chain_matrices(n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """State equations of n masses in a chain: x = (x_1..x_n, v_1..v_n), u = force on mass 1.

    Link j (spring k and damper c) joins mass j to mass j+1, the last link
    joins mass n to the frame; its force k (x_j - x_{j+1}) + c (v_j - v_{j+1})
    pulls mass j back and mass j+1 forward.  Output: v_n.
    """
    a = np.zeros((2 * n, 2 * n))
    b = np.zeros(2 * n)
    c = np.zeros(2 * n)
    for j in range(n):
        a[j, n + j] = 1.0
    for j in range(n):  # link j
        other = j + 1 if j < n - 1 else None
        for row, sign in ((j, -1.0), (other, 1.0)):
            if row is None:
                continue
            a[n + row, j] += sign * STIFFNESS / MASS
            a[n + row, n + j] += sign * DAMPING / MASS
            if other is not None:
                a[n + row, other] -= sign * STIFFNESS / MASS
                a[n + row, n + other] -= sign * DAMPING / MASS
    b[n] = 1.0 / MASS
    c[2 * n - 1] = 1.0
    return a, b, c


def chain_text(n: int, stop: float) -> str:
    lines = [f"# generated: {n} masses linked by springs and dampers, 1 N step on m1"]
    lines += [f"mass m{k} 1 kg" for k in range(1, n + 1)]
    for k in range(1, n + 1):
        other = f"m{k + 1}" if k < n else "frame"
        lines += [f"spring K{k} from m{k} to {other} 1 kN/m",
                  f"damper D{k} from m{k} to {other} 50 N*s/m"]
    lines += ["force source F at m1 step 1 N",
              f"watch velocity of m{n}",
              f"window {stop:.6g} s"]
    return "\n".join(lines) + "\n"


def make_cases() -> list[dict]:
    cases = []
    for n in LADDERS:
        a, b, c = ladder_matrices(n)
        stop = window_of(a)
        cases.append({"name": f"ladder-{n}", "kind": "RLC ladder", "size": n,
                      "states": 2 * n, "last": f"n{n}", "text": ladder_text(n, stop),
                      "A": a, "B": b * V_STEP, "C": c, "stop": stop})
    for n in CHAINS:
        a, b, c = chain_matrices(n)
        stop = window_of(a)
        cases.append({"name": f"chain-{n}", "kind": "mass chain", "size": n,
                      "states": 2 * n, "last": f"m{n}", "text": chain_text(n, stop),
                      "A": a, "B": b * F_STEP, "C": c, "stop": stop})
    return cases


# --------------------------------------------------------------------------- (a) lumped


def lumped_pipeline(text: str, source: str, last: str | None) -> dict:
    """Netlist text to closed forms and figures; ``last=None`` means every node."""
    cpu_marks = [time.process_time()]
    marks = [time.perf_counter()]
    net = loads(text, source)
    cpu_marks.append(time.process_time())
    marks.append(time.perf_counter())
    solution = assemble(net)
    marks.append(time.perf_counter())
    cpu_marks.append(time.process_time())
    if last is None:
        nodes = [n for n in net.nodes if n not in ("ground", "frame")]
    else:
        nodes = [last]
    responses = [solution.response(solution.node_quantity(n)) for n in nodes]
    marks.append(time.perf_counter())
    cpu_marks.append(time.process_time())
    times = [invert(rationalise(r.transform), s) for r in responses]
    marks.append(time.perf_counter())
    cpu_marks.append(time.process_time())
    start, stop = float(net.window.start), float(net.window.stop)
    figures = [compute_figures(t, start, stop) for t in times]
    marks.append(time.perf_counter())
    cpu_marks.append(time.process_time())
    cpu = cpu_marks[-1] - cpu_marks[0]
    names = ("parse", "assemble", "responses", "inversion", "figures")
    stages = dict(zip(names, np.diff(marks).tolist(), strict=True))
    stages_cpu = dict(zip(names, np.diff(cpu_marks).tolist(), strict=True))
    return {"stages": stages, "stages_cpu": stages_cpu, "total": marks[-1] - marks[0],
            "cpu": cpu, "nodes": len(nodes),
            "responses": responses, "times": times, "figures": figures}


def time_lumped(case: dict, last: str | None, repeats: int) -> dict:
    runs = []
    for _ in range(repeats):
        clear_cache()
        gc.collect()
        runs.append(lumped_pipeline(case["text"], case["name"], last))
    best = min(runs, key=lambda r: r["total"])
    stage_best = {k: min(r["stages"][k] for r in runs) for k in best["stages"]}
    return {"total_best": best["total"], "total_first": runs[0]["total"],
            "totals": [r["total"] for r in runs], "stages_best": stage_best,
            "cpu_best": min(r["cpu"] for r in runs),
            "stages_cpu_best": {k: min(r["stages_cpu"][k] for r in runs)
                                for k in best["stages_cpu"]},
            "nodes": best["nodes"], "result": best}


def traced_peak(func: Callable[[], object]) -> float:
    """tracemalloc peak of ``func`` in MB (Python allocations only)."""
    clear_cache()
    gc.collect()
    tracemalloc.start()
    try:
        func()
        return tracemalloc.get_traced_memory()[1] / 2**20
    finally:
        tracemalloc.stop()


# --------------------------------------------------------------------------- (b) CAS route


def _cas_child(transform: sympy.Expr, probes: list[float], conn) -> None:
    """Child process: sympy's inverse_laplace_transform, then a few values."""
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


# --------------------------------------------------------------------------- (c) integrator


def ivp_solution(a: np.ndarray, b: np.ndarray, c: np.ndarray, t_eval: np.ndarray) -> np.ndarray:
    x0 = np.zeros(a.shape[0])
    scale = max(1e-300, float(np.max(np.abs(np.linalg.solve(a, -b)))))

    def rhs(_t: float, x: np.ndarray) -> np.ndarray:
        return a @ x + b

    sol = scipy.integrate.solve_ivp(rhs, (0.0, float(t_eval[-1])), x0, method=IVP_METHOD,
                                    t_eval=t_eval, rtol=IVP_RTOL, atol=1e-12 * scale)
    if not sol.success:
        raise RuntimeError(sol.message)
    return c @ sol.y


def expm_solution(a: np.ndarray, b: np.ndarray, c: np.ndarray, t_eval: np.ndarray) -> np.ndarray:
    """Exact step response C A^-1 (e^{At} - I) b by matrix exponentials (a second check)."""
    xss = np.linalg.solve(a, b)
    return np.array([c @ (scipy.linalg.expm(a * t) @ xss - xss) for t in t_eval])


def relative_difference(x: np.ndarray, y: np.ndarray) -> float:
    span = float(np.max(y) - np.min(y))
    return float(np.max(np.abs(x - y))) / span if span > 0 else float(np.max(np.abs(x - y)))


# --------------------------------------------------------------------------- the items


def bench_case(case: dict, repeats: int, cas: bool) -> dict:
    print(f"  {case['name']}: lumped", flush=True)
    last = time_lumped(case, case["last"], repeats)
    every = time_lumped(case, None, repeats)
    result = last.pop("result")
    every.pop("result")
    response, tr = result["responses"][0], result["times"][0]
    transform = rationalise(response.transform)
    den_degree = sympy.Poly(sympy.denom(sympy.together(transform)), s).degree()
    out = {
        "name": case["name"], "kind": case["kind"], "size": case["size"],
        "states": case["states"], "denominator_degree": den_degree,
        "modes": len(tr.modes), "window_s": case["stop"], "watched": case["last"],
        "lumped_last": last, "lumped_every": every,
    }
    out["tracemalloc_peak_mb_last"] = traced_peak(
        lambda: lumped_pipeline(case["text"], case["name"], case["last"]))
    out["tracemalloc_peak_mb_every"] = traced_peak(
        lambda: lumped_pipeline(case["text"], case["name"], None))
    try:
        out["analyse_best"] = best_of(lambda: analyse(loads(case["text"], case["name"])),
                                      repeats)["best"]
    except Exception as error:  # recorded, not fatal
        out["analyse_error"] = f"{type(error).__name__}: {error}"

    t_eval = np.linspace(0.0, case["stop"], IVP_POINTS)
    print(f"  {case['name']}: solve_ivp", flush=True)
    ivp = best_of(lambda: ivp_solution(case["A"], case["B"], case["C"], t_eval), repeats)
    y_ivp = ivp_solution(case["A"], case["B"], case["C"], t_eval)
    y_exp = expm_solution(case["A"], case["B"], case["C"], t_eval)
    y_lumped = tr.evaluate(t_eval)
    out["ivp"] = {"method": IVP_METHOD, "rtol": IVP_RTOL, "points": IVP_POINTS,
                  "best": ivp["best"], "all": ivp["all"]}
    out["max_rel_diff_ivp"] = relative_difference(y_lumped, y_ivp)
    out["max_rel_diff_expm"] = relative_difference(y_lumped, y_exp)
    out["ivp_vs_expm"] = relative_difference(y_ivp, y_exp)
    out["signal_range"] = float(np.max(y_ivp) - np.min(y_ivp))
    out["final_lumped"] = float(y_lumped[-1])
    out["final_expected"] = float(case["C"] @ np.linalg.solve(case["A"], -case["B"]))
    a_time = last["total_best"]
    out["ratio_ivp"] = ivp["best"] / a_time

    if not cas:
        out["cas"] = {"status": "not run (--quick)"}
    elif case["states"] > CAS_MAX_ORDER:
        out["cas"] = {"status": f"skipped (order > {CAS_MAX_ORDER})"}
    else:
        print(f"  {case['name']}: CAS route (limit {CAS_LIMIT:.0f} s)", flush=True)
        probes = [case["stop"] * f for f in (0.1, 0.3, 0.6)]
        cas_out = run_cas(transform, CAS_LIMIT, probes)
        if "values" in cas_out:
            exact = tr.evaluate(np.array(probes))
            got = np.array([v.real for v in cas_out["values"]])
            cas_out["max_rel_diff_to_lumped"] = float(
                np.max(np.abs(got - exact)) / max(out["signal_range"], 1e-300))
        out["cas"] = cas_out
    cas_out = out["cas"]
    if cas_out.get("status") == "ok":
        out["ratio_cas"] = cas_out["seconds"] / a_time
    elif cas_out.get("status") == "time limit":
        out["ratio_cas"] = cas_out["limit"] / a_time
        out["ratio_cas_lower_bound"] = True
    out["maxrss_mb_after"] = maxrss_mb()
    return out


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


def bench_quartic(repeats: int, cas: bool) -> dict:
    coeffs, checks = quartic_denominator()
    den = sum(sympy.Integer(c) * s ** (4 - i) for i, c in enumerate(coeffs))
    transform = 1 / den
    print("  quartic: lumped.inversion.invert", flush=True)
    inv = best_of(lambda: invert(transform, s), max(repeats, 5))
    out = {"transform": f"1/({den})", "checks": checks, "invert_best": inv["best"],
           "invert_all": inv["all"]}
    if cas:
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
            out["ratio"], out["ratio_lower_bound"] = cas_out["seconds"] / inv["best"], False
        elif cas_out["status"] == "time limit":
            out["ratio"], out["ratio_lower_bound"] = CAS_LIMIT_QUARTIC / inv["best"], True
    else:
        out["cas"] = {"status": "not run (--quick)"}
    return out


def bench_samples(tr, stop: float, repeats: int) -> dict:
    count = 10**6
    uniform = np.linspace(0.0, stop, count)
    scattered = np.sort(np.random.default_rng(1).uniform(0.0, stop, count))
    tr.evaluate(uniform[:1000])
    out = {"samples": count, "modes": len(tr.modes)}
    for name, grid in (("uniform", uniform), ("scattered", scattered)):
        timing = best_of(lambda grid=grid: tr.evaluate(grid), repeats)
        out[f"{name}_best"], out[f"{name}_cpu_best"] = timing["best"], timing["cpu_best"]
    out["derivative1_uniform_best"] = best_of(lambda: tr.evaluate(uniform, 1), repeats)["best"]
    return out


def bench_figures(tr, stop: float, repeats: int) -> dict:
    timing = best_of(lambda: compute_figures(tr, 0.0, stop), repeats)
    return {"best": timing["best"], "all": timing["all"], "cpu_best": timing["cpu_best"],
            "modes": len(tr.modes)}


def bench_cli(repeats: int) -> list[dict]:
    env = dict(os.environ)
    try:
        import lumped as _probe

        installed = not Path(_probe.__file__).resolve().is_relative_to(SRC.resolve())
    except ImportError:
        installed = False
    if not installed:
        env["PYTHONPATH"] = os.pathsep.join(p for p in (str(SRC), env.get("PYTHONPATH")) if p)
    rows = []
    for path in sorted((ROOT / "examples").glob("*.lumped")):
        times, cpu, code = [], [], None
        for _ in range(repeats):
            before = resource.getrusage(resource.RUSAGE_CHILDREN)
            start = time.perf_counter()
            done = subprocess.run([sys.executable, "-m", "lumped.cli", str(path), "--quiet"],
                                  cwd=ROOT, env=env, capture_output=True, text=True,
                                  timeout=120)
            times.append(time.perf_counter() - start)
            after = resource.getrusage(resource.RUSAGE_CHILDREN)
            cpu.append(after.ru_utime + after.ru_stime - before.ru_utime - before.ru_stime)
            code = done.returncode
            tail = (done.stderr or "").strip().splitlines()[-1:] if done.returncode > 1 else []
        rows.append({"example": path.name, "best": min(times), "all": times,
                     "cpu_best": min(cpu),
                     "exit_status": code, "stderr_tail": tail})
        print(f"  {path.name}: {fmt_time(min(times))}, CPU {fmt_time(min(cpu))} (exit {code})",
              flush=True)
    return rows


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


# --------------------------------------------------------------------------- report


def markdown(report: dict) -> str:
    m = report["machine"]
    lines = [
        "# lumped benchmark",
        "",
        f"- date: {report['date']}",
        f"- machine: {m['platform']}; CPU {m['cpu']}; {m['cores']} cores; "
        f"{m['memory_gb']:.1f} GB",
        "- versions: " + ", ".join(f"{k} {v}" for k, v in m["versions"].items()),
        f"- source: git {m['git']}",
        "- thread variables for this process: "
        + ", ".join(f"{k}={v}" for k, v in m["threads"].items()),
        f"- timings: best of {report['repeats']} with time.perf_counter (CPU time with "
        "time.process_time beside it), sympy's cache cleared before each run; the run took "
        + fmt_time(report["elapsed_s"]),
        f"- load average (1, 5, 15 min) at start {report['load_start']}, at end "
        f"{report['load_end']}, on {m['cores']} cores: other work on the machine inflates "
        "wall times, CPU times less so",
        "",
        "## Targets",
        "",
        "| target | measured (wall) | CPU time | verdict (on wall time) |",
        "|---|---|---|---|",
    ]
    for row in report["targets"]:
        lines.append(f"| {row['target']} | {row['measured']} | {row['cpu']} "
                     f"| {row['verdict']} |")
    lines += [
        "",
        "## Ladders and chains: lumped stages (last node, best of runs)",
        "",
        "(a) = netlist text → parse + validate → assemble + solve → response → inversion "
        "→ figures.",
        "",
        "| case | states | modes | parse | assemble | response | inversion | figures "
        "| (a) last node | (a) every node (nodes) | analyse() |",
        "|---|---|---|---|---|---|---|---|---|---|---|",
    ]
    for c in report["cases"]:
        st = c["lumped_last"]["stages_best"]
        ev = c["lumped_every"]
        lines.append(
            f"| {c['name']} | {c['states']} | {c['modes']} | {fmt_time(st['parse'])} "
            f"| {fmt_time(st['assemble'])} | {fmt_time(st['responses'])} "
            f"| {fmt_time(st['inversion'])} | {fmt_time(st['figures'])} "
            f"| {fmt_time(c['lumped_last']['total_best'])} "
            f"(CPU {fmt_time(c['lumped_last']['cpu_best'])}) "
            f"| {fmt_time(ev['total_best'])} ({ev['nodes']}) "
            f"| {fmt_time(c.get('analyse_best'))} |")
    lines += [
        "",
        "## Every node: stages (best of runs)",
        "",
        "| case | nodes | parse | assemble | responses | inversions | figures | total "
        "| total CPU |",
        "|---|---|---|---|---|---|---|---|---|",
    ]
    for c in report["cases"]:
        ev = c["lumped_every"]
        st = ev["stages_best"]
        lines.append(
            f"| {c['name']} | {ev['nodes']} | {fmt_time(st['parse'])} "
            f"| {fmt_time(st['assemble'])} | {fmt_time(st['responses'])} "
            f"| {fmt_time(st['inversion'])} | {fmt_time(st['figures'])} "
            f"| {fmt_time(ev['total_best'])} | {fmt_time(ev['cpu_best'])} |")
    lines += [
        "",
        "## Against the CAS route (b) and the integrator (c)",
        "",
        f"(b) sympy `inverse_laplace_transform(X, s, t)` on the last node's X(s), "
        f"t positive, in a forked child killed at {CAS_LIMIT:.0f} s; "
        f"(c) `solve_ivp` {IVP_METHOD}, rtol {IVP_RTOL:g}, atol 1e-12 × state scale, "
        f"{IVP_POINTS} points, on hand-derived state equations. Ratios are against (a) "
        "last node. Differences are max |lumped − reference| over the signal's range; "
        "expm = exact matrix-exponential step response.",
        "",
        "| case | (b) CAS | (b)/(a) | (c) solve_ivp | (c)/(a) | diff vs (c) | diff vs expm "
        "| tracemalloc peak last / every | maxrss after |",
        "|---|---|---|---|---|---|---|---|---|",
    ]
    for c in report["cases"]:
        cas = c["cas"]
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
        lines.append(
            f"| {c['name']} | {cas_text} "
            f"| {fmt_ratio(c.get('ratio_cas'), c.get('ratio_cas_lower_bound', False))} "
            f"| {fmt_time(c['ivp']['best'])} | {fmt_ratio(c['ratio_ivp'])} "
            f"| {c['max_rel_diff_ivp']:.1e} | {c['max_rel_diff_expm']:.1e} "
            f"| {c['tracemalloc_peak_mb_last']:.1f} / {c['tracemalloc_peak_mb_every']:.1f} MB "
            f"| {c['maxrss_mb_after']:.0f} MB |")
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
        f"- `lumped.inversion.invert`: {fmt_time(q['invert_best'])} (best of "
        f"{len(q['invert_all'])})",
        f"- sympy `inverse_laplace_transform`: {cas.get('status')}"
        + (f", {fmt_time(cas['seconds'])}" if cas.get("seconds") else "")
        + (f", limit {cas['limit']:.0f} s" if cas.get("status") == "time limit" else "")
        + (f" ({cas['error']})" if cas.get("error") else "")
        + (f"; max |difference| to lumped at t = 1, 3, 6 s: "
           f"{cas['max_abs_diff_to_lumped']:.1e}" if "max_abs_diff_to_lumped" in cas else ""),
        f"- ratio: {fmt_ratio(q.get('ratio'), q.get('ratio_lower_bound', False))}",
        "",
        "## Samples and figures (20-section ladder, last node)",
        "",
        f"- 10^6 samples, {report['samples']['modes']} modes: uniform grid "
        f"{fmt_time(report['samples']['uniform_best'])}, sorted random times "
        f"{fmt_time(report['samples']['scattered_best'])}, first derivative (uniform) "
        f"{fmt_time(report['samples']['derivative1_uniform_best'])}",
        f"- `compute_figures` on the 40-state response: {fmt_time(report['figures']['best'])}",
        "",
        "## CLI on the examples (start-up included, best of runs)",
        "",
        "| example | wall time | CPU time (user + sys) | exit status |",
        "|---|---|---|---|",
    ]
    for row in report["cli"]:
        lines.append(f"| {row['example']} | {fmt_time(row['best'])} "
                     f"| {fmt_time(row['cpu_best'])} | {row['exit_status']} |")
    if report.get("notes"):
        lines += ["", "## Notes", ""] + [f"- {n}" for n in report["notes"]]
    return "\n".join(lines) + "\n"


def targets(report: dict) -> list[dict]:
    rows = []

    def row(target: str, measured: str, result: str, cpu: float | None = None) -> None:
        rows.append({"target": target, "measured": measured, "cpu": fmt_time(cpu),
                     "verdict": result})

    big = next((c for c in report["cases"] if c["name"] == "ladder-20"), None)
    if big is not None:
        ev, cpu = big["lumped_every"]["stages_best"], big["lumped_every"]["stages_cpu_best"]
        s_parts = ("parse", "assemble", "responses")
        s_domain = sum(ev[k] for k in s_parts)
        closed = s_domain + ev["inversion"]
        bound = TARGETS["s_domain_40_state"]
        row(f"40-state ladder, every node, in s (parse + assemble + responses) < {bound} s",
            fmt_time(s_domain), verdict(s_domain, bound), sum(cpu[k] for k in s_parts))
        bound = TARGETS["closed_form_40_state"]
        row(f"40-state ladder, every node, closed form (… + inversions) < {bound} s",
            fmt_time(closed), verdict(closed, bound),
            sum(cpu[k] for k in (*s_parts, "inversion")))
        total = big["lumped_every"]["total_best"]
        row(f"40-state ladder, every node, closed form + figures < {bound} s (stricter reading)",
            fmt_time(total), verdict(total, bound), big["lumped_every"]["cpu_best"])
    q = report["quartic"]
    bound = TARGETS["quartic_ratio"]
    text = f"4th-order irreducible: CAS time / lumped invert time > {bound:.0f}×"
    if q.get("ratio") is not None:
        row(text, fmt_ratio(q["ratio"], q["ratio_lower_bound"]),
            verdict(q["ratio"], bound, above=True))
    else:
        row(text, f"CAS route {q['cas'].get('status')}", "not judged")
    smp = report["samples"]
    bound = TARGETS["samples_1e6"]
    row(f"10^6 samples of a {smp['modes']}-mode response, uniform grid < {bound} s",
        fmt_time(smp["uniform_best"]), verdict(smp["uniform_best"], bound),
        smp["uniform_cpu_best"])
    row(f"10^6 samples of a {smp['modes']}-mode response, sorted random times < {bound} s",
        fmt_time(smp["scattered_best"]), verdict(smp["scattered_best"], bound),
        smp["scattered_cpu_best"])
    fig = report["figures"]
    bound = TARGETS["figures_40_state"]
    row(f"figures of the 40-state response < {bound} s", fmt_time(fig["best"]),
        verdict(fig["best"], bound), fig["cpu_best"])
    if report["cli"]:
        worst = max(report["cli"], key=lambda r: r["best"])
        bound = TARGETS["cli_example"]
        row(f"CLI on every example, start-up included, < {bound} s each",
            f"slowest {fmt_time(worst['best'])} ({worst['example']})",
            verdict(worst["best"], bound), max(r["cpu_best"] for r in report["cli"]))
    return rows


def jsonable(value):
    if isinstance(value, dict):
        return {k: jsonable(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [jsonable(v) for v in value]
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
                        help="one repeat, no CAS runs: a smoke run (results still written)")
    args = parser.parse_args(argv)
    repeats = 1 if args.quick else REPEATS
    cas = not args.quick
    began = time.perf_counter()
    report: dict = {
        "date": datetime.datetime.now(datetime.UTC).strftime("%Y-%m-%d %H:%M UTC"),
        "repeats": repeats,
        "quick": args.quick,
        "machine": {
            "platform": platform.platform(), "cpu": cpu_model(), "cores": os.cpu_count(),
            "memory_gb": os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES") / 2**30,
            "versions": versions(), "git": git_state(),
            "threads": {k: os.environ[k] for k in THREAD_VARIABLES},
        },
        "notes": [],
        "load_start": [round(x, 2) for x in os.getloadavg()],
    }
    first = time.perf_counter()
    loads("resistor R from a to ground 1 ohm\n", "warm-up")
    report["first_parse_s"] = time.perf_counter() - first
    report["notes"].append(
        f"the first parse in the process (grammar built once) took "
        f"{fmt_time(report['first_parse_s'])}; later parses reuse it (the CLI rows include it)")

    print("1. ladders and chains", flush=True)
    cases = make_cases()
    report["cases"] = []
    ladder20 = None
    for case in cases:
        report["cases"].append(bench_case(case, repeats, cas))
        if case["name"] == "ladder-20":
            ladder20 = case
    print("2. 4th-order irreducible case", flush=True)
    report["quartic"] = bench_quartic(repeats, cas)

    print("3./4. samples and figures", flush=True)
    clear_cache()
    net = loads(ladder20["text"], ladder20["name"])
    solution = assemble(net)
    response = solution.response(solution.node_quantity(ladder20["last"]))
    tr = invert(rationalise(response.transform), s)
    report["samples"] = bench_samples(tr, ladder20["stop"], repeats)
    report["figures"] = bench_figures(tr, ladder20["stop"], repeats)

    print("5. CLI on the examples", flush=True)
    report["cli"] = bench_cli(repeats)

    report["maxrss_mb_self"] = maxrss_mb()
    report["maxrss_mb_children"] = maxrss_mb(resource.RUSAGE_CHILDREN)
    report["notes"].append(
        f"peak resident memory: this process {report['maxrss_mb_self']:.0f} MB, largest child "
        f"{report['maxrss_mb_children']:.0f} MB (a forked CAS child counts the pages it shares "
        "with this process); tracemalloc sees Python allocations only (not python-flint's "
        "C memory)")
    report["notes"].append(
        "'modes' counts distinct poles with a conjugate pair once, the step's pole at 0 included")
    report["elapsed_s"] = time.perf_counter() - began
    report["load_end"] = [round(x, 2) for x in os.getloadavg()]
    report["targets"] = targets(report)
    text = markdown(report)
    write_atomic(RESULTS / "latest.json", json.dumps(jsonable(report), indent=2) + "\n")
    write_atomic(RESULTS / "latest.md", text)
    print()
    print(text)
    return 0


if __name__ == "__main__":
    sys.exit(main())
