"""Benchmarks of sphere (closed-string) expansions.  Prints figures only.

    LOWENERGY_CACHE_DIR=... python bench/bench_sphere.py

* the closed-string factor ``abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)`` to order 12
  (coefficients up to weight 13);
* a weight-4 single-valued insertion,
  ``abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*svpolylog(0,0,1,1; z)``, to order 8
  (weight 13);
* the shifted factor ``abs(z)^(-2*S)*abs(1-z)^(-2*T-2)`` (a U-channel pole)
  to order 8;
* a weight-3 insertion ``svpolylog(0,1,1; z)`` to order 8 unshifted
  (a = b = 0), with a = 1, b = 0 (the U-pole formula of step 3) and with
  a = b = 1 (the general route of steps 5-6, subleading terms at ∞).

Each runs in a fresh child process (read + expand, MZV tables to weight 14
already built; targets: seconds each); peak memory is the child's ``ru_maxrss``.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

ROOT = str(Path(__file__).resolve().parents[1])

CHILD = r"""
import json, resource, sys, time
sys.path.insert(0, ROOT)
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.svpolylog.sphere import expand_sphere
t0 = time.perf_counter()
itg = integrand_from_text('domain = "sphere"\nvariables = ["S", "T"]\nintegrand = "' + TEXT + '"')
e = expand_sphere(itg, ORDER)
t1 = time.perf_counter()
e2 = expand_sphere(itg, ORDER)
t2 = time.perf_counter()
print(json.dumps({"cold": t1 - t0, "warm": t2 - t1, "rows": len(e.coefficients) + len(e.u_poles),
                  "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}))
"""

CASES = [
    ("closed-string factor, order 12", "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)", 12),
    ("weight-4 insertion L_0011, order 8", "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*svpolylog(0,0,1,1; z)", 8),
    ("shifted factor (U pole), order 8", "abs(z)^(-2*S)*abs(1-z)^(-2*T-2)", 8),
    ("L_011, a = b = 0, order 8", "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*svpolylog(0,1,1; z)", 8),
    ("L_011, a = 1, b = 0, order 8", "abs(z)^(-2*S)*abs(1-z)^(-2*T-2)*svpolylog(0,1,1; z)", 8),
    ("L_011, a = b = 1, order 8", "abs(z)^(-2*S)*abs(1-z)^(-2*T)*svpolylog(0,1,1; z)", 8),
]


def main(only: str = "") -> None:
    from lowenergy.zeta.table import build_tables

    build_tables(14)
    print(f"{'case':40s} {'cold s':>8s} {'warm s':>8s} {'rows':>5s} {'peak MB':>8s}")
    for name, text, order in CASES:
        if only not in name:
            continue
        code = CHILD.replace("ROOT", repr(ROOT)).replace("TEXT", repr(text)).replace("ORDER", str(order))
        out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
        r = json.loads(out.stdout.strip().splitlines()[-1])
        print(f"{name:40s} {r['cold']:8.2f} {r['warm']:8.2f} {r['rows']:5d} {r['peak_mb']:8.0f}")


if __name__ == "__main__":
    sys.path.insert(0, ROOT)
    main(sys.argv[1] if len(sys.argv) > 1 else "")   # optional: run only the cases whose name contains it
