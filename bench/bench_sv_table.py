"""Construction time and peak memory of the single-valued polylogarithms, per weight.  Prints figures only.

    LOWENERGY_CACHE_DIR=... python bench/bench_sv_table.py [--max 13] [--old-max 9]

For each weight N, in a fresh child process (MZV tables 2..N loaded first and
not counted):

* ``old``: the first construction (tests/svpolylog/fixed_point_reference.py:
  dense products of whole series, fixed point iterated on whole series), the
  table of all ``A_s`` up to N; only up to ``--old-max`` (it grows ~4x per
  weight: minutes at 10, ~45 min at 12 under load);
* ``table``: :func:`lowenergy.svpolylog.construct.build_sv_table` (no JSON cache);
* ``at one``: what :func:`sv_value_at_one` builds (``Z`` and ``Z_y`` only), then
  ``L_w(1)`` for every convergent word of weight N (the MZVs of weight N).

Times are wall clock with the child's CPU time in brackets (the CPU time
is the steadier figure on a shared machine); the ratio is of CPU times.
Peak memory is the child's ``ru_maxrss`` (resource.getrusage); it includes
the interpreter and the loaded MZV tables (shown as ``base``).  Where the old
construction runs, the new table is compared with it (``identical``).
"""

from __future__ import annotations

import argparse
import json
import subprocess
import sys
import time
from pathlib import Path

ROOT = str(Path(__file__).resolve().parents[1])

CHILD = r"""
import json, resource, sys, time
sys.path.insert(0, ROOT)
from lowenergy.zeta.table import default_store

def peak_mb():
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024

mode, n = sys.argv[1], int(sys.argv[2])
store = default_store()
for w in range(2, n + 1):
    store.reduction((w,))           # loads the MZV table of weight w
store.all_generators(n)
base = peak_mb()
out = {"base_mb": base}
if mode == "old":
    from tests.svpolylog.fixed_point_reference import reference_construction
    from lowenergy.svpolylog.construct import build_sv_table
    t0, c0 = time.perf_counter(), time.process_time()
    y1, parts, z, zy = reference_construction(n, store)
    out["seconds"], out["cpu"] = time.perf_counter() - t0, time.process_time() - c0
    out["peak_mb"] = peak_mb()
    out["entries"] = sum(len(p) for p in parts.values())
    new = build_sv_table(n, store)
    out["identical"] = new.y1 == y1 and new.parts == parts
elif mode == "table":
    from lowenergy.svpolylog.construct import build_sv_table
    t0, c0 = time.perf_counter(), time.process_time()
    table = build_sv_table(n, store)
    out["seconds"], out["cpu"] = time.perf_counter() - t0, time.process_time() - c0
    out["peak_mb"] = peak_mb()
    out["entries"] = sum(len(p) for p in table.parts.values())
else:
    from lowenergy.svpolylog import construct
    from lowenergy.words import admissible_indices
    t0, c0 = time.perf_counter(), time.process_time()
    values = construct._ValuesAtOne(construct._Construction(n, store))
    out["seconds"], out["cpu"] = time.perf_counter() - t0, time.process_time() - c0
    words = []
    for idx in admissible_indices(n):
        word = []
        for m in idx:
            word += [0] * (m - 1) + [1]
        words.append(tuple(word))
    t0 = time.perf_counter()
    nonzero = sum(1 for w in words if values.value(w))
    out["values_seconds"] = time.perf_counter() - t0
    out["values"] = len(words)
    out["nonzero"] = nonzero
    out["peak_mb"] = peak_mb()
print(json.dumps(out))
"""


def run(mode: str, n: int, timeout: float) -> dict | None:
    code = f"ROOT = {ROOT!r}\n" + CHILD
    try:
        out = subprocess.run([sys.executable, "-c", code, mode, str(n)], capture_output=True, text=True,
                             timeout=timeout, cwd=ROOT)
    except subprocess.TimeoutExpired:
        return None
    if out.returncode:
        raise SystemExit(out.stderr)
    return json.loads(out.stdout.strip().splitlines()[-1])


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--min", type=int, default=6)
    parser.add_argument("--max", type=int, default=13)
    parser.add_argument("--old-max", type=int, default=9)
    parser.add_argument("--timeout", type=float, default=1800.0, help="per child process, seconds")
    args = parser.parse_args()

    sys.path.insert(0, ROOT)
    from lowenergy.zeta.table import build_tables, default_store

    store = default_store()
    print(f"cache directory: {store.directory}")
    have = store.built_weight()
    if have < args.max:
        t0 = time.perf_counter()
        build_tables(args.max, store)
        print(f"built MZV tables from weight {have + 1} to {args.max} in {time.perf_counter() - t0:.1f} s (one-time)")

    print("weight | old table: s [cpu s] peak | new table: s [cpu s] peak | cpu ratio | "
          "new at one: s [cpu s] peak + all L_w(1) of the weight | base MB")
    for n in range(args.min, args.max + 1):
        old = run("old", n, args.timeout) if n <= args.old_max else None
        new = run("table", n, args.timeout)
        one = run("one", n, args.timeout)
        if n <= args.old_max and old is None:
            old_txt = f"> {args.timeout:.0f} s (stopped)"
        elif old is None:
            old_txt = "not run"
        else:
            old_txt = f"{old['seconds']:8.2f} s [{old['cpu']:7.2f}] {old['peak_mb']:5.0f} MB ({old['entries']} entries, identical: {old['identical']})"
        new_txt = "timeout" if new is None else f"{new['seconds']:7.2f} s [{new['cpu']:6.2f}] {new['peak_mb']:5.0f} MB"
        ratio = f"{old['cpu'] / new['cpu']:7.1f}x" if old and new else "      -"
        one_txt = ("timeout" if one is None else
                   f"{one['seconds']:7.2f} s [{one['cpu']:6.2f}] {one['peak_mb']:5.0f} MB + {one['values']} values "
                   f"({one['nonzero']} non-zero) in {one['values_seconds']:.2f} s")
        base = (new or one or {}).get("base_mb", 0.0)
        print(f"  {n:2d}   | {old_txt} | {new_txt} | {ratio} | {one_txt} | {base:.0f}", flush=True)


if __name__ == "__main__":
    main()
