"""Start-up time of the command line beside the time Python takes to import sympy.

Run from the repository root::

    python -m tests.benchmarks.startup            # best of 5, interleaved
    python -m tests.benchmarks.startup --repeats 9 --imports

Each repetition runs, one after the other, ``python -c "import sympy"``,
``lumped --check EXAMPLE`` and ``lumped EXAMPLE --quiet`` (through the
installed ``lumped`` script beside this Python, or ``python -m lumped.cli``),
so that a load change on a shared machine touches all three alike.  Wall
times are ``time.perf_counter`` around the child; CPU times are the
children's user + system time.  The targets: ``--check`` no slower than
importing sympy, a full run within 2.5 times of it.  ``--imports`` adds the
most expensive imports of each command (``python -X importtime``), summed by
top-level package.

The children may write and reuse byte code (``PYTHONDONTWRITEBYTECODE`` is
dropped from their environment), as an installed package has it; the warm-up
round writes it.  ``--no-byte-code-cache`` keeps the variable as it is (byte code
already on disk is still read: remove ``__pycache__`` folders to time compiling).
``--src FOLDER`` puts another checkout's ``src`` first on the children's
``PYTHONPATH``: the same commands on another version of the package.
"""

from __future__ import annotations

import argparse
import os
import resource
import shutil
import subprocess
import sys
import time
from collections import Counter
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
EXAMPLE = ROOT / "examples" / "rc_inrush_limiter.lumped"
FULL_RUN_BOUND = 2.5  # a full run within this multiple of `import sympy`


def _lumped_command() -> list[str]:
    script = Path(sys.executable).with_name("lumped")
    if script.exists():
        return [str(script)]
    found = shutil.which("lumped")
    return [found] if found else [sys.executable, "-m", "lumped.cli"]


def commands(example: Path) -> dict[str, list[str]]:
    """The three commands timed, by the name shown in the table."""
    lumped = _lumped_command()
    return {
        'python -c "import sympy"': [sys.executable, "-c", "import sympy"],
        f"lumped --check {example.name}": [*lumped, "--check", str(example)],
        f"lumped {example.name} --quiet": [*lumped, str(example), "--quiet"],
    }


def child_environment(src: Path | None, byte_code_cache: bool) -> dict[str, str]:
    """The environment of the timed commands (see the module's description)."""
    env = dict(os.environ)
    if byte_code_cache:
        env.pop("PYTHONDONTWRITEBYTECODE", None)
    if src is not None:
        env["PYTHONPATH"] = os.pathsep.join(p for p in (str(src), env.get("PYTHONPATH")) if p)
    return env


ENVIRONMENT: dict[str, str] = dict(os.environ)


def _run_once(command: list[str]) -> tuple[float, float, int]:
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    done = subprocess.run(command, cwd=ROOT, env=ENVIRONMENT, capture_output=True, timeout=300)
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = after.ru_utime + after.ru_stime - before.ru_utime - before.ru_stime
    return wall, cpu, done.returncode


def time_commands(example: Path, repeats: int) -> dict[str, dict]:
    """Best wall and CPU time of each command over ``repeats`` interleaved rounds."""
    timed = commands(example)
    walls: dict[str, list[float]] = {name: [] for name in timed}
    cpus: dict[str, list[float]] = {name: [] for name in timed}
    codes: dict[str, int] = {}
    for command in timed.values():  # one warm-up each: byte code and disk caches
        _run_once(command)
    for _ in range(repeats):
        for name, command in timed.items():
            wall, cpu, code = _run_once(command)
            walls[name].append(wall)
            cpus[name].append(cpu)
            codes[name] = code
    return {name: {"best": min(walls[name]), "cpu_best": min(cpus[name]),
                   "all": walls[name], "exit_status": codes[name]} for name in timed}


def import_costs(command: list[str], top: int = 12) -> list[tuple[str, float]]:
    """The ``top`` top-level packages by their summed own import time (ms), one run."""
    done = subprocess.run([sys.executable, "-X", "importtime", *_as_python(command)],
                          cwd=ROOT, env=ENVIRONMENT, capture_output=True, text=True,
                          timeout=300)
    own: Counter[str] = Counter()
    for line in done.stderr.splitlines():
        if not line.startswith("import time:") or "self [us]" in line:
            continue
        self_us, _, name = line.split(":", 1)[1].split("|")
        own[name.strip().split(".")[0]] += int(self_us)
    return [(name, us / 1000) for name, us in own.most_common(top)]


def _as_python(command: list[str]) -> list[str]:
    """The command's arguments after the interpreter (a script becomes ``-m lumped.cli``)."""
    if command[0] == sys.executable:
        return command[1:]
    return ["-m", "lumped.cli", *command[1:]]


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m tests.benchmarks.startup",
                                     description="Start-up time of lumped beside import sympy.")
    parser.add_argument("--repeats", type=int, default=5)
    parser.add_argument("--example", type=Path, default=EXAMPLE)
    parser.add_argument("--imports", action="store_true",
                        help="also list the costliest imports of each command")
    parser.add_argument("--src", type=Path, help="a checkout's src folder to time instead")
    parser.add_argument("--no-byte-code-cache", action="store_true",
                        help="keep PYTHONDONTWRITEBYTECODE as it is in the environment "
                        "(byte code already written is still read)")
    args = parser.parse_args(argv)
    ENVIRONMENT.clear()
    ENVIRONMENT.update(child_environment(args.src, not args.no_byte_code_cache))
    load_start = os.getloadavg()
    results = time_commands(args.example, args.repeats)
    load_end = os.getloadavg()
    sympy_best = results['python -c "import sympy"']["best"]
    byte_code = ("not written" if ENVIRONMENT.get("PYTHONDONTWRITEBYTECODE")
                 else "written and reused")
    print(f"best of {args.repeats}; load average {load_start[0]:.2f} at start, "
          f"{load_end[0]:.2f} at end ({os.cpu_count()} cores); byte code {byte_code}"
          + (f"; package from {args.src}" if args.src else ""))
    print(f"| {'command':<40} | wall best | CPU best | / import sympy | exit |")
    print(f"|{'-' * 42}|-----------|----------|----------------|------|")
    for name, row in results.items():
        print(f"| {name:<40} | {row['best']:7.3f} s | {row['cpu_best']:6.3f} s | "
              f"{row['best'] / sympy_best:14.2f} | {row['exit_status']:4d} |")
    names = list(results)
    check, full = results[names[1]]["best"], results[names[2]]["best"]
    print(f"--check no slower than import sympy: {'PASS' if check <= sympy_best else 'MISS'}"
          f" ({check / sympy_best:.2f}x)")
    print(f"full run within {FULL_RUN_BOUND}x import sympy: "
          f"{'PASS' if full <= FULL_RUN_BOUND * sympy_best else 'MISS'}"
          f" ({full / sympy_best:.2f}x)")
    if args.imports:
        for name, command in commands(args.example).items():
            costs = import_costs(command)
            print(f"\nown import time by package, {name}: total "
                  f"{sum(ms for _, ms in import_costs(command, top=10_000)):.0f} ms")
            for package, ms in costs:
                print(f"  {package:<28} {ms:7.1f} ms")
    return 0


if __name__ == "__main__":
    sys.exit(main())
