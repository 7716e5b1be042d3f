"""Fuzz the four readers and print the outcome table.

    .venv/bin/python bench/fuzz_readers.py --examples 10000 [--jobs 2] [--seed 0]

Inputs come from the hypothesis strategies of tests/fuzz/strategies.py
(grammar-aware mutations of the shipped examples and constraint sets, TOML
type confusion, huge numbers, deep nesting, long words, long sums, towers).
Each input runs in a separate worker process (a pool of ``--jobs`` workers
that read one input at a time from a pipe):

* an input that takes more than ``--timeout`` seconds (default 5) of CPU
  time counts as a timeout, and so does one without a reply after
  ``--wall-factor`` times that of wall time (the worker is then killed and
  replaced; CPU time keeps the measure fair on a shared machine);
* a worker whose peak resident memory passes ``--memory`` MB (default 1024)
  while reading an input, or that raises MemoryError (its address space is
  capped at 4 GB), counts as a memory blow-up and is replaced;
* a worker that dies counts as "other exception" (a crash);
* the reply is "result", "package error" (a LowEnergyError) or "other
  exception" (with its type, listed below the table).

The workers use MZV tables to weight ``--table-weight`` (default 14, as the
test suite) in ``--cache``, built before the run if missing.  Like the test
suite, the workers do not build tables on demand (``auto_build`` off): an
input that needs a higher weight ends in the package's ``TableError`` naming
the ``tables build`` command.  Building tables is bounded, announced work of
its own (minutes per weight above 16, see the README), not a reader hang, and
it would otherwise be counted as a timeout once and then be cached.
Prints the table (reader | inputs | result | package error | other exception
| timeout > T s | memory > M MB), the slowest inputs and every escape.
"""

from __future__ import annotations

import argparse
import json
import os
import select
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

WORKER = r"""
import json, os, resource, sys, time, traceback
sys.path.insert(0, os.environ["FUZZ_ROOT"])
resource.setrlimit(resource.RLIMIT_AS, (4 << 30, 4 << 30))
from lowenergy.errors import LowEnergyError
from tests.fuzz.strategies import run_reader
import lowenergy.zeta.expression, lowenergy.integrand.reader, lowenergy.constraints, lowenergy.tables
from lowenergy.zeta.table import default_store
default_store().auto_build = False  # as in the test suite: no on-demand table builds
out = sys.stdout
sys.stdout = sys.stderr
out.write("ready\n"); out.flush()
for line in sys.stdin:
    job = json.loads(line)
    t0 = time.perf_counter()
    c0 = time.process_time()
    try:
        run_reader(job["reader"], job["text"])
        kind, detail = "result", ""
    except LowEnergyError as err:
        kind, detail = "package error", str(err)[:200]
    except MemoryError:
        kind, detail = "memory", "MemoryError"
    except BaseException as err:
        tb = traceback.extract_tb(err.__traceback__)
        where = f"{tb[-1].filename.split('lowenergy/')[-1]}:{tb[-1].lineno}" if tb else "?"
        kind, detail = "other exception", f"{type(err).__name__} at {where}: {str(err)[:150]}"
    secs = time.perf_counter() - t0
    cpu = time.process_time() - c0
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
    out.write(json.dumps({"kind": kind, "detail": detail, "secs": secs, "cpu": cpu, "rss": rss}) + "\n")
    out.flush()
"""


class Worker:
    def __init__(self, env: dict) -> None:
        self.env = env
        self.start()

    def start(self) -> None:
        self.proc = subprocess.Popen(
            [sys.executable, "-c", WORKER],
            stdin=subprocess.PIPE,
            stdout=subprocess.PIPE,
            stderr=subprocess.DEVNULL,
            env=self.env,
            text=True,
            bufsize=1,
        )
        if self.proc.stdout.readline().strip() != "ready":
            raise SystemExit("a fuzz worker failed to start (run the WORKER code by hand to see why)")
        self.base_rss = 0
        self.job = None
        self.sent = 0.0

    def send(self, job: dict) -> None:
        self.job = job
        self.sent = time.perf_counter()
        self.proc.stdin.write(json.dumps(job) + "\n")
        self.proc.stdin.flush()

    def kill(self) -> None:
        self.proc.kill()  # only this worker, which we started
        self.proc.wait()
        self.start()


def _escape(escapes: list, item: tuple) -> None:
    """Record an escape and show it at once (a long run reveals it early)."""
    escapes.append(item)
    reader, detail, text = item
    print(f"  escape [{reader}] {detail}: {text[:200]!r}", flush=True)


def collect_inputs(reader: str, n: int, seed: int) -> list:
    from hypothesis import HealthCheck, Phase, given, settings
    from hypothesis import seed as fixed_seed

    from tests.fuzz.strategies import STRATEGIES

    found: list = []

    @fixed_seed(seed)
    @settings(max_examples=n, database=None, deadline=None, phases=[Phase.generate],
              suppress_health_check=list(HealthCheck))
    @given(STRATEGIES[reader]())
    def gather(text):
        found.append(text)

    gather()
    return found[:n]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--examples", type=int, default=10_000, help="inputs per reader")
    ap.add_argument("--jobs", type=int, default=2)
    ap.add_argument("--timeout", type=float, default=5.0)
    ap.add_argument("--wall-factor", type=float, default=4.0,
                    help="kill a worker after this many times --timeout of wall time (the machine may be shared)")
    ap.add_argument("--memory", type=int, default=1024, help="MB")
    ap.add_argument("--seed", type=int, default=0)
    ap.add_argument("--readers", default="integrand,constraints,expression,csv")
    ap.add_argument("--table-weight", type=int, default=14, help="MZV tables the workers may use")
    ap.add_argument("--cache", default=os.environ.get("LOWENERGY_CACHE_DIR", str(ROOT / ".fuzz-cache")))
    args = ap.parse_args()

    env = dict(os.environ, LOWENERGY_CACHE_DIR=args.cache, FUZZ_ROOT=str(ROOT), PYTHONHASHSEED="0")
    os.environ["LOWENERGY_CACHE_DIR"] = args.cache
    from lowenergy.zeta.table import build_tables, default_store

    if default_store().built_weight() < args.table_weight:
        print(f"building MZV tables to weight {args.table_weight} ...", flush=True)
        build_tables(args.table_weight)
    print(f"workers use MZV tables to weight {default_store().built_weight()} (no on-demand builds)", flush=True)

    readers = args.readers.split(",")
    rows = {}
    escapes = []
    slowest = []
    t_all = time.perf_counter()
    for reader in readers:
        t0 = time.perf_counter()
        inputs = collect_inputs(reader, args.examples, args.seed)
        gen_secs = time.perf_counter() - t0
        print(f"{reader}: {len(inputs)} inputs generated in {gen_secs:.0f} s", flush=True)
        done = 0
        counts = {"result": 0, "package error": 0, "other exception": 0, "timeout": 0, "memory": 0}
        workers = [Worker(env) for _ in range(args.jobs)]
        queue = list(enumerate(inputs))
        busy = {}
        peak_rss = 0
        while queue or busy:
            for w in workers:
                if w.job is None and queue:
                    i, text = queue.pop()
                    w.send({"reader": reader, "text": text, "i": i})
                    busy[w.proc.stdout.fileno()] = w
            ready, _, _ = select.select(list(busy), [], [], 0.2)
            now = time.perf_counter()
            for fd in ready:
                w = busy.pop(fd)
                line = w.proc.stdout.readline()
                job = w.job
                w.job = None
                if not line:  # the worker died
                    counts["other exception"] += 1
                    _escape(escapes, (reader, "crash (worker died)", job["text"]))
                    w.start()
                    continue
                reply = json.loads(line)
                kind = reply["kind"]
                peak_rss = max(peak_rss, reply["rss"])
                if kind != "memory" and reply["rss"] > args.memory << 20:
                    kind = "memory"
                if kind == "memory":
                    _escape(escapes, (reader, f"memory: peak {reply['rss'] >> 20} MB", job["text"]))
                    w.kill()
                elif reply["cpu"] > args.timeout:
                    kind = "timeout"
                    _escape(escapes, (reader, f"timeout: {reply['cpu']:.1f} s CPU", job["text"]))
                counts[kind] += 1
                if kind == "other exception":
                    _escape(escapes, (reader, reply["detail"], job["text"]))
                slowest.append((reply["cpu"], reader, job["text"]))
                done += 1
                if done % 250 == 0:
                    print(f"  {reader}: {done} run, {dict(counts)}", flush=True)
            for fd, w in list(busy.items()):
                if now - w.sent > args.wall_factor * args.timeout:
                    busy.pop(fd)
                    counts["timeout"] += 1
                    _escape(escapes, (reader, f"timeout: killed after {args.wall_factor * args.timeout} s wall", w.job["text"]))
                    w.job = None
                    w.kill()
        for w in workers:
            w.proc.stdin.close()
            w.proc.wait()
        rows[reader] = (len(inputs), counts, time.perf_counter() - t0, gen_secs, peak_rss)
        print(f"{reader}: {len(inputs)} inputs in {time.perf_counter() - t0:.0f} s", flush=True)

    print()
    print(f"| reader | inputs | result | package error | other exception | timeout > {args.timeout:g} s "
          f"| memory > {args.memory / 1024:g} GB | wall time | worker peak RSS |")
    print("|---|---|---|---|---|---|---|---|---|")
    for reader, (n, c, secs, gen, rss) in rows.items():
        print(f"| {reader} | {n:,} | {c['result']:,} | {c['package error']:,} | {c['other exception']:,} "
              f"| {c['timeout']:,} | {c['memory']:,} | {secs:.0f} s | {rss >> 20} MB |")
    print(f"\ntotal wall time {time.perf_counter() - t_all:.0f} s, {args.jobs} workers")
    slowest.sort(reverse=True)
    print("\nslowest inputs (CPU seconds):")
    for secs, reader, text in slowest[:8]:
        print(f"  {secs:6.2f} s  {reader:11s} {text[:110]!r}")
    if escapes:
        print(f"\n{len(escapes)} escapes:")
        for reader, detail, text in escapes[:60]:
            print(f"  [{reader}] {detail}\n      input: {text[:300]!r}")


if __name__ == "__main__":
    main()
