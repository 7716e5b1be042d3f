"""Benchmarks of the MZV layer (issue: foundation).  Prints figures; asserts nothing.

    python bench/bench_mzv.py            # weights 8, 10, 12, 14
    python bench/bench_mzv.py 8 10 12    # a chosen list

Each table build runs in a fresh subprocess with an empty cache directory, so
the time is "from scratch" and the peak memory (ru_maxrss) is that build's.
Targets (issue text): weight 12 from scratch < 60 s on 2 cores; one cached
weight-12 reduction < 10 ms; weight 14 built and reported.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

# run from a checkout without installing
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

CHILD = r"""
import json, os, resource, sys, time
from lowenergy.zeta.table import build_tables
w = int(sys.argv[1])
t0 = time.perf_counter()
store = build_tables(w)
elapsed = time.perf_counter() - t0
peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
print(json.dumps({"weight": w, "seconds": elapsed, "peak_mb": peak, "dimension": store.dimension(w),
                  "stats": store.stats(w)}))
"""


def build(weight: int) -> dict:
    with tempfile.TemporaryDirectory() as tmp:
        env = dict(os.environ, LOWENERGY_CACHE_DIR=tmp)
        out = subprocess.run([sys.executable, "-c", CHILD, str(weight)], env=env, capture_output=True, text=True)
        if out.returncode:
            raise SystemExit(out.stderr)
        return json.loads(out.stdout)


def cached_reduction(weight: int = 12) -> None:
    from lowenergy.words import admissible_indices
    from lowenergy.zeta.element import zeta
    from lowenergy.zeta.expression import evaluate
    from lowenergy.zeta.table import build_tables, default_store

    with tempfile.TemporaryDirectory() as tmp:
        os.environ["LOWENERGY_CACHE_DIR"] = tmp
        build_tables(weight)
        store = default_store()
        store.forget()
        t0 = time.perf_counter()
        zeta(3, 9)  # first use loads the weight-12 file
        load = time.perf_counter() - t0
        words = admissible_indices(weight)
        t0 = time.perf_counter()
        for idx in words:
            zeta(*idx)
        per = (time.perf_counter() - t0) / len(words)
        text = "zeta(3,2,2,5) + 2*zeta(5,7) - zeta(2)^3*zeta(3,3) + pi^12/7"
        t0 = time.perf_counter()
        n = 200
        for _ in range(n):
            evaluate(text)
        per_expr = (time.perf_counter() - t0) / n
    print(f"cached weight-{weight} file load: {load * 1e3:.1f} ms (once per process)")
    print(f"cached reduction per MZV (all {len(words)} words of weight {weight}): {per * 1e6:.1f} µs")
    print(f"parse + reduce one weight-12 expression: {per_expr * 1e3:.2f} ms  (target < 10 ms: ratio {per_expr / 0.010:.3f})")


def numerics() -> None:
    from lowenergy.zeta.numeric import zeta_numeric

    for digits in (100, 500):
        for idx in [(3, 9), (5, 3, 2, 2), (2, 2, 3, 5), (3, 3, 3, 5)]:
            t0 = time.perf_counter()
            reps = 5
            for _ in range(reps):
                zeta_numeric(idx, digits)
            dt = (time.perf_counter() - t0) / reps
            print(f"numeric ζ{idx} to {digits} digits: {dt * 1e3:.1f} ms")


def main() -> None:
    weights = [int(a) for a in sys.argv[1:]] or [8, 10, 12, 14]
    print("MZV table builds from scratch (double shuffle + Hoffman, mod-p elimination):")
    for w in weights:
        r = build(w)
        s = r["stats"]
        print(
            f"  weight {w:2d}: {r['seconds']:7.2f} s total, peak {r['peak_mb']:7.1f} MB, d_{w} = {r['dimension']}, "
            f"top weight: {s.get('rows')} x {s.get('columns')} system, elimination {s.get('elimination_s', 0):.2f} s"
        )
        if w == 12:
            print(f"  weight 12 target < 60 s: ratio {r['seconds'] / 60:.3f}")
    cached_reduction()
    numerics()


if __name__ == "__main__":
    main()
