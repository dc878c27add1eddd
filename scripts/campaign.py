"""A long random campaign against the tool (not part of the test suite).

Two kinds of trial, spread over worker processes:

* networks: random connected networks (``tests/reference/random_networks.py``)
  through the library, every node and store compared with the independent
  state-model reference (``scipy.linalg.expm``) to 1e-6 of each quantity's range;
* texts: mutations of the shipped examples and of generated netlists (byte
  flips, token swaps, deleted and duplicated lines, random unit words and
  numbers) through the command line in-process (``lumped.cli.main``), checking
  that the exit status is never 3, that no Python traceback is printed, and the
  time each input takes.

Usage::

    python scripts/campaign.py --networks 10000 --texts 100000 --seed 1 --out results.json

Every failure is reduced (parts or lines removed while the same failure stays)
and its netlist saved under ``--failures`` (default ``campaign_failures/``).
"""

from __future__ import annotations

import argparse
import contextlib
import io
import json
import multiprocessing
import os
import random
import re
import sys
import tempfile
import time
import traceback
from collections import Counter
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from tests.reference.random_networks import (  # noqa: E402
    Network,
    compare,
    generate,
    regular,
    time_limit,
)

SLOW_SECONDS = 5.0  # an input slower than this is reported
HARD_SECONDS = 60  # an input is stopped after this (counted as slow and failed)
EXAMPLES = sorted((ROOT / "examples").glob("*.lumped"))


class ExpiredError(BaseException):
    """The per-input hard time limit ran out (not an Exception: nothing may swallow it)."""


def hard_limit(seconds: int | None = None):
    return time_limit(seconds or HARD_SECONDS, ExpiredError)


def failure_class(error: BaseException) -> str:
    """A short key grouping failures of one cause: type and the message's first words."""
    return f"{type(error).__name__}: {_gist(str(error))}".strip()


def _gist(message: str) -> str:
    """The plain words of a message's first line (numbers, names, formulas dropped)."""
    words = [w for w in message.split("\n")[0].split() if w.rstrip(":").isalpha()]
    return " ".join(words[:4])


# ---------------------------------------------------------------------------
# Networks


def run_network(net: Network) -> dict:
    start = time.perf_counter()
    record: dict = {"seed": net.seed}
    try:
        with hard_limit(HARD_SECONDS):
            outcome = compare(net)
        record["status"] = outcome.status
        record["detail"] = outcome.detail
        record["class"] = outcome.status
        if outcome.status == "refused":
            record["class"] = "refused: " + outcome.detail.split(":")[0]
    except ExpiredError:
        record.update(status="timeout", detail=f"over {HARD_SECONDS} s")
        record["class"] = "timeout"
    except Exception as error:  # an unexpected exception type is a failure
        record.update(status="error", detail=traceback.format_exc(limit=-3))
        record["class"] = failure_class(error)
    record["seconds"] = time.perf_counter() - start
    return record


def network_trial(seed: int) -> dict:
    irrational = random.Random(seed).random() < 0.5
    net = generate(seed, irrational=irrational)
    record = run_network(net)
    record["irrational"] = irrational
    if record["status"] in ("disagree", "error", "timeout") or record["seconds"] > SLOW_SECONDS:
        record["text"] = net.text()
    return record


def _without(net: Network, kind: str, k: int) -> Network | None:
    parts, links = list(net.parts), list(net.links)
    (parts if kind == "part" else links).pop(k)
    used = {n for p in parts for n in (p.a, p.b)} | {
        n for link in links for n in (link.a, link.b, link.a2, link.b2)}
    nodes = {n: d for n, d in net.nodes.items() if n in used}
    if not nodes:
        return None
    lets = [(name, text) for name, text in net.lets
            if any(p.text == name for p in parts)]
    smaller = Network(nodes, parts, links, lets, net.window, net.seed)
    return smaller if regular(smaller) else None


def reduce_network(net: Network, key: str, budget: float = 90.0) -> Network:
    """Remove parts and couplings while the failure keeps its class."""
    deadline = time.monotonic() + budget
    changed = True
    while changed and time.monotonic() < deadline:
        changed = False
        for kind, count in (("part", len(net.parts)), ("link", len(net.links))):
            for k in reversed(range(count)):
                if time.monotonic() > deadline:
                    break
                trial = _without(net, kind, k)
                if trial is None:
                    continue
                if run_network(trial)["class"] == key:
                    net, changed = trial, True
                    break
            if changed:
                break
    return net


# ---------------------------------------------------------------------------
# Texts

UNIT_WORDS = ["V", "mV", "kV", "A", "mA", "ohm", "kohm", "Ω", "uF", "µF", "nF", "pF", "F", "H",
              "mH", "nH", "kg", "g", "lb", "N", "kN", "lbf", "N/m", "kN/m", "lbf/in", "N*s/m",
              "m/s", "rad/s", "rpm", "deg", "rad", "s", "ms", "us", "ns", "Hz", "kHz", "MHz",
              "%", "m", "mm", "in", "kg*m^2", "N*m", "N*m/rad", "V*s/rad", "m/s^2", "g", "W",
              "J", "furlong", "uFF", "ohm^2", "1/s", "s^-1", "V/ms", "mV*s"]
NUMBERS = ["0", "-0", "1", "-1", "1e308", "1e-308", "1e999", "0.0", ".5", "5.", "1e-30",
           "123456789012345678901234567890", "3.3e+3", "nan", "inf", "2^64", "1/0", "0/0",
           "sqrt(-1)", "sqrt(0)", "pi", "pi^pi^pi", "(1)", "-(-(-1))", "1e15", "7e-13"]
KEYWORDS = ["resistor", "capacitor", "inductor", "mass", "spring", "damper", "inertia",
            "voltage source", "current source", "force source", "velocity source",
            "displacement source", "torque source", "gear", "lever", "motor", "transformer",
            "rack", "belt", "watch", "window", "require", "let", "gravity", "drop", "from",
            "to", "at", "on", "initially", "step", "sine", "ramp", "pulse", "impulse",
            "exponential", "bump", "plus", "after", "phase", "for", "tau", "ratio",
            "constant", "radius", "ground", "frame", "peak", "below", "above", "between",
            "settling band", "(", ")", ",", "=", "#", "\t", "\r", "\x00", "\ufeff", "é"]
TOKEN = re.compile(r"\S+")


def mutate(text: str, rng: random.Random) -> str:
    """One to four random edits of a netlist text."""
    for _ in range(rng.randint(1, 4)):
        lines = text.split("\n")
        tokens = list(TOKEN.finditer(text))
        op = rng.randrange(9)
        if op == 0 and text:  # flip a byte
            data = bytearray(text.encode("utf-8"))
            data[rng.randrange(len(data))] ^= 1 << rng.randrange(8)
            text = data.decode("utf-8", errors="replace")
        elif op == 1 and len(tokens) >= 2:  # swap two tokens
            a, b = sorted(rng.sample(tokens, 2), key=lambda t: t.start())
            text = (text[:a.start()] + b.group() + text[a.end():b.start()] + a.group()
                    + text[b.end():])
        elif op == 2 and lines:  # delete a line
            lines.pop(rng.randrange(len(lines)))
            text = "\n".join(lines)
        elif op == 3 and lines:  # duplicate a line
            k = rng.randrange(len(lines))
            lines.insert(k, lines[k])
            text = "\n".join(lines)
        elif op == 4 and tokens:  # a token becomes a unit word
            t = rng.choice(tokens)
            text = text[:t.start()] + rng.choice(UNIT_WORDS) + text[t.end():]
        elif op == 5 and tokens:  # a token becomes a number
            t = rng.choice(tokens)
            text = text[:t.start()] + rng.choice(NUMBERS) + text[t.end():]
        elif op == 6:  # insert a keyword or punctuation somewhere
            k = rng.randrange(len(text) + 1)
            text = text[:k] + " " + rng.choice(KEYWORDS) + " " + text[k:]
        elif op == 7 and tokens:  # a token becomes another from the text
            t = rng.choice(tokens)
            text = text[:t.start()] + rng.choice(tokens).group() + text[t.end():]
        elif op == 8 and text:  # truncate
            text = text[:rng.randrange(len(text))]
    return text


def run_cli(text: str, folder: str, check: bool) -> dict:
    from lumped.cli import main

    path = os.path.join(folder, "input.lumped")
    with open(path, "w", encoding="utf-8", errors="surrogateescape") as handle:
        handle.write(text)
    out, err = io.StringIO(), io.StringIO()
    start = time.perf_counter()
    record: dict = {}
    try:
        with hard_limit(HARD_SECONDS), contextlib.redirect_stdout(out), \
                contextlib.redirect_stderr(err):
            status = main([path, "--check"] if check else [path])
        record["status"] = status
    except ExpiredError:
        record["status"] = "timeout"
    except SystemExit as stop:  # argparse; never expected with our arguments
        record["status"] = f"exit {stop.code}"
    except Exception:
        record["status"] = "escaped"
        err.write(traceback.format_exc())
    record["seconds"] = time.perf_counter() - start
    printed = out.getvalue() + err.getvalue()
    record["traceback"] = "Traceback (most recent call last)" in printed
    if record["status"] == 3:
        match = re.search(r"internal error while working on .*?: (\w+): ?(.*)", printed)
        if match:
            record["class"] = f"internal: {match.group(1)}: {_gist(match.group(2))}".strip()
        else:
            record["class"] = "internal"
    elif record["status"] in ("timeout", "escaped") or record["traceback"]:
        record["class"] = f"{record['status']}{' traceback' if record['traceback'] else ''}"
    elif record["seconds"] > SLOW_SECONDS:
        record["class"] = "slow"
    else:
        record["class"] = {0: "ok", 1: "ok", 2: "refused"}.get(record["status"],
                                                               f"status {record['status']}")
    record["message"] = printed[-600:]
    return record


_FOLDER: str | None = None


def _folder() -> str:
    global _FOLDER
    if _FOLDER is None:
        _FOLDER = tempfile.mkdtemp(prefix="lumped-campaign-")
    return _FOLDER


def text_source(seed: int) -> str:
    rng = random.Random(seed)
    if rng.random() < 0.5 and EXAMPLES:
        base = rng.choice(EXAMPLES).read_text(encoding="utf-8")
    else:
        base = generate(rng.randrange(2**31), irrational=rng.random() < 0.5,
                        max_nodes=rng.randint(2, 6)).text()
    return mutate(base, rng)


def text_trial(seed: int) -> dict:
    text = text_source(seed)
    check = random.Random(seed ^ 0x5EED).random() < 0.2
    record = run_cli(text, _folder(), check)
    record["seed"] = seed
    record["check"] = check
    if record["class"] not in ("ok", "refused"):
        record["text"] = text
    return record


def reduce_text(text: str, key: str, check: bool, budget: float = 60.0) -> str:
    """Remove lines while the failure keeps its class."""
    deadline = time.monotonic() + budget
    lines = text.split("\n")
    k = len(lines) - 1
    while k >= 0 and time.monotonic() < deadline:
        trial = lines[:k] + lines[k + 1:]
        if run_cli("\n".join(trial), _folder(), check)["class"] == key:
            lines = trial
        k -= 1
    return "\n".join(lines)


# ---------------------------------------------------------------------------
# Driver


def _set_limit(seconds: int) -> None:
    global HARD_SECONDS
    HARD_SECONDS = seconds


def _task(job: tuple[str, int]) -> tuple[str, dict]:
    kind, seed = job
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    if kind == "network":
        return kind, network_trial(seed)
    return kind, text_trial(seed)


def _reduce(job: tuple[str, dict]) -> tuple[str, dict, str]:
    kind, record = job
    if record["class"].startswith("timeout") or record["class"] == "slow":
        return kind, record, record.get("text", "")  # too dear to reduce
    try:
        if kind == "network":
            irrational = record.get("irrational", True)
            net = reduce_network(generate(record["seed"], irrational=irrational),
                                 record["class"])
            return kind, record, net.text()
        return kind, record, reduce_text(record["text"], record["class"], record["check"])
    except Exception:
        return kind, record, record.get("text", "")


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--networks", type=int, default=10_000)
    parser.add_argument("--texts", type=int, default=100_000)
    parser.add_argument("--seed", type=int, default=1)
    parser.add_argument("--out", default="campaign_results.json")
    parser.add_argument("--failures", default="campaign_failures")
    parser.add_argument("--workers", type=int, default=2)
    parser.add_argument("--reduce", type=int, default=2,
                        help="reduce at most this many inputs per failure class")
    parser.add_argument("--hard-limit", type=int, default=HARD_SECONDS,
                        help="stop one input after this many seconds (default 60)")
    args = parser.parse_args(argv)
    _set_limit(args.hard_limit)

    base = args.seed * 1_000_003
    jobs = [("network", base + k) for k in range(args.networks)]
    jobs += [("text", base + 7_000_000 + k) for k in range(args.texts)]
    random.Random(args.seed).shuffle(jobs)
    counts = {"network": Counter(), "text": Counter()}
    slow: list[dict] = []
    failures: dict[tuple[str, str], list[dict]] = {}
    start = time.monotonic()
    done = 0
    context = multiprocessing.get_context("fork")
    with context.Pool(args.workers, maxtasksperchild=200, initializer=_set_limit,
                      initargs=(args.hard_limit,)) as pool:
        for kind, record in pool.imap_unordered(_task, jobs, chunksize=4):
            done += 1
            counts[kind][record["class"]] += 1
            if record["seconds"] > SLOW_SECONDS:
                slow.append({"kind": kind, "seed": record["seed"],
                             "seconds": round(record["seconds"], 2)})
            bad = (record["class"] not in ("ok", "refused", "agree")
                   and not record["class"].startswith("refused"))
            if bad:
                failures.setdefault((kind, record["class"]), []).append(record)
                # At once, so an interrupted run still names what failed.
                print(f"FAILED {kind} seed {record['seed']}: {record['class']}", flush=True)
            if done % 500 == 0 or done == len(jobs):
                rate = done / (time.monotonic() - start)
                print(f"{done}/{len(jobs)} ({rate:.1f}/s)  networks {dict(counts['network'])}  "
                      f"texts {dict(counts['text'])}", flush=True)
        # Reduce a few of each failure class to a short reproducer.
        picks = [(kind, r) for (kind, key), records in failures.items()
                 for r in records[:args.reduce]]
        reduced = pool.map(_reduce, picks, chunksize=1)
    folder = Path(args.failures)
    saved: dict[str, list[str]] = {}
    if reduced:
        folder.mkdir(parents=True, exist_ok=True)
    for kind, record, text in reduced:
        slug = re.sub(r"[^A-Za-z0-9]+", "_", record["class"]).strip("_")[:50]
        path = folder / f"{kind}_{slug}_{record['seed']}.lumped"
        note = record.get("detail") or record.get("message") or ""
        header = "".join(f"# {line}\n" for line in
                         [f"{kind} seed {record['seed']}: {record['class']}",
                          *note.strip().splitlines()[-6:]])
        path.write_text(header + text, encoding="utf-8")
        saved.setdefault(f"{kind}: {record['class']}", []).append(str(path))
    network_counts = counts["network"]
    summary = {
        "seed": args.seed,
        "seconds": round(time.monotonic() - start, 1),
        "networks": {
            "total": args.networks,
            "agreements": network_counts["agree"],
            "disagreements": network_counts["disagree"],
            "clean refusals": sum(v for k, v in network_counts.items()
                                  if k.startswith("refused")),
            "unexpected exceptions": sum(v for k, v in network_counts.items()
                                         if k not in ("agree", "disagree", "timeout")
                                         and not k.startswith("refused")),
            "timeouts": network_counts["timeout"],
            "by class": dict(network_counts),
        },
        "texts": {
            "total": args.texts,
            "accepted": counts["text"]["ok"],
            "clean refusals": counts["text"]["refused"],
            "internal errors": sum(v for k, v in counts["text"].items()
                                   if k.startswith("internal")),
            "tracebacks or escapes": sum(v for k, v in counts["text"].items()
                                         if "traceback" in k or k.startswith("escaped")),
            "timeouts": counts["text"]["timeout"],
            "by class": dict(counts["text"]),
        },
        "slow cases (> 5 s)": sorted(slow, key=lambda r: -r["seconds"]),
        "failure classes": {f"{k}: {c}": len(v) for (k, c), v in failures.items()},
        "reproducers": saved,
    }
    tmp = Path(args.out).with_suffix(".json.tmp")
    tmp.write_text(json.dumps(summary, indent=2, default=str), encoding="utf-8")
    os.replace(tmp, args.out)
    print(json.dumps({k: v for k, v in summary.items() if k != "reproducers"}, indent=2,
                     default=str)[:6000])
    print(f"reproducers in {folder}/, summary in {args.out}")
    return 1 if failures or slow else 0


if __name__ == "__main__":
    sys.exit(main())
