"""Benchmarks of the expansion engine (issue: low-energy expansion).  Prints figures only.

    python bench/bench_expand.py

* the open-superstring factor x^(-s-1)(1-x)^(-t) to orders 6, 8, 12, 16;
* a weight-6 word G(0,0,1,0,1,1; x) inserted in x^(-s-1)(1-x)^(-t-1), orders 6, 8, 10;
* side by side: sympy's `series` of Γ(1-s)Γ(1-t)/Γ(1-s-t) at orders 4 and 6.

Order 16 of the Beta-type factor needs MZV tables to weight 17 and the weight-6
integrand at order 10 also weight 17; the script builds missing tables first
(the coaction route, a few minutes, once) and reports that time separately.
Each expansion is timed twice: in a fresh process ("cold": loads tables and
word-value rows from the disk cache, building rows on first use) and again in
the same process ("warm").  Peak memory is the child's ru_maxrss.
Targets (issue text): order 16 of the Beta-type factor < 1 s; the weight-6
integrand at order 10 < 30 s.
"""

from __future__ import annotations

import json
import subprocess
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

CHILD = r"""
import json, resource, sys, time
from fractions import Fraction
from lowenergy.expansion.engine import raw_series
from lowenergy.integrand.model import LinearExponent
kind, order = sys.argv[1], int(sys.argv[2])
X = LinearExponent(-1, Fraction(-1), 0)
if kind == "superstring":
    Y, word = LinearExponent(0, Fraction(-1), 1), ()
else:
    Y, word = LinearExponent(-1, Fraction(-1), 1), (0, 0, 1, 0, 1, 1)
t0 = time.perf_counter(); r = raw_series(X, Y, word, order); cold = time.perf_counter() - t0
t0 = time.perf_counter(); r2 = raw_series(X, Y, word, order); warm = time.perf_counter() - t0
assert r == r2
peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
print(json.dumps({"cold": cold, "warm": warm, "terms": len(r), "peak_mb": peak}))
"""

SYMPY_CHILD = r"""
import sys, time, sympy
n = int(sys.argv[1])
s, t, e = sympy.symbols("s t e")
f = sympy.gamma(1 - e*s) * sympy.gamma(1 - e*t) / sympy.gamma(1 - e*s - e*t)
t0 = time.perf_counter()
ser = sympy.series(f, e, 0, n + 1).removeO()
print(time.perf_counter() - t0)
"""


def run(code: str, *args: str, timeout: float = 900) -> str:
    out = subprocess.run([sys.executable, "-c", code, *args], capture_output=True, text=True, timeout=timeout)
    if out.returncode:
        raise SystemExit(out.stderr)
    return out.stdout.strip()


def main() -> None:
    from lowenergy.zeta.table import build_tables, default_store

    store = default_store()
    if store.built_weight() < 17:
        t0 = time.perf_counter()
        build_tables(17, store)
        print(f"built MZV tables to weight 17 in {time.perf_counter() - t0:.1f} s (one-time, cached)")
    else:
        print(f"MZV tables to weight {store.built_weight()} found in {store.directory}")
    for kind, orders, target in (("superstring", (6, 8, 12, 16), (16, 1.0)), ("weight6", (6, 8, 10), (10, 30.0))):
        for order in orders:
            r = json.loads(run(CHILD, kind, str(order)))
            line = (
                f"{kind:12s} order {order:2d}: cold {r['cold']:7.2f} s, warm {r['warm']:6.3f} s, "
                f"{r['terms']} Laurent terms, peak {r['peak_mb']:.0f} MB"
            )
            if order == target[0]:
                line += f"   [target < {target[1]:g} s: cold ratio {r['cold'] / target[1]:.2f}]"
            print(line, flush=True)
    for n in (4, 6):
        try:
            secs = float(run(SYMPY_CHILD, str(n), timeout=600))
            print(f"sympy series of Γ(1-s)Γ(1-t)/Γ(1-s-t), order {n}: {secs:.1f} s")
        except subprocess.TimeoutExpired:
            print(f"sympy series of Γ(1-s)Γ(1-t)/Γ(1-s-t), order {n}: > 600 s (stopped)")


if __name__ == "__main__":
    main()
