"""Benchmark of the numerics behind ``lowenergy verify`` on sphere files.  Prints figures only.

    LOWENERGY_CACHE_DIR=... python bench/bench_sphere_verify.py

1. Time per quadrature node for ``L_w`` at the three images ``w, 1 - w, 1/w``
   of a node ``w`` in ``R0 = {|w| < 1, Re w < 1/2}``, all words up to weight
   4, at 22 working digits (what verify uses for --digits 12):
   :class:`lowenergy.svpolylog.planar.PlaneValues` (series in -log(1-w) and
   transport) against three Taylor continuations
   (:func:`lowenergy.svpolylog.numeric.sv_polylogs_numeric`, the route verify
   used before), plus the largest difference between the two.
2. Wall time and peak memory of ``verify_sphere`` (fresh child process,
   level 3, --digits 12) on two invented integrands with genuine
   single-valued insertions: ``L_01 + L_10`` at S = -0.1, T = -0.15 (order 8)
   and ``L_0111`` at S = -0.1, T = -0.1 (order 8).
"""

from __future__ import annotations

import json
import subprocess
import sys
import time
from fractions import Fraction
from pathlib import Path

ROOT = str(Path(__file__).resolve().parents[1])

CHILD = r"""
import json, resource, sys, time
from fractions import Fraction
sys.path.insert(0, ROOT)
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.svpolylog.sphere import expand_sphere
from lowenergy.svpolylog.sphere_verify import verify_sphere
itg = integrand_from_text('domain = "sphere"\nvariables = ["S", "T"]\nintegrand = "' + TEXT + '"')
e = expand_sphere(itg, 8)
t0 = time.perf_counter()
rep = verify_sphere(itg, e, POINT, digits=12)
t1 = time.perf_counter()
print(json.dumps({"seconds": t1 - t0, "agree": rep.digits_agreement, "consistent": rep.consistent,
                  "qerr": float(rep.quadrature_error),
                  "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}))
"""

CASES = [
    ("L_01 + L_10, S=-0.1, T=-0.15", "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*(svpolylog(0,1; z) + svpolylog(1,0; z))",
     {"S": Fraction(-1, 10), "T": Fraction(-3, 20)}),
    ("L_0111, S=-0.1, T=-0.1", "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*svpolylog(0,1,1,1; z)", {"S": Fraction(-1, 10), "T": Fraction(-1, 10)}),
]


def per_node() -> None:
    import mpmath

    from lowenergy.svpolylog.numeric import sv_polylogs_numeric
    from lowenergy.svpolylog.planar import PlaneValues
    from lowenergy.words import all_words

    words = [w for k in range(1, 5) for w in all_words(k)]
    nodes = [mpmath.mpc(0.2, 0.3), mpmath.mpc(-0.7, 0.5), mpmath.mpc(0.45, 0.8), mpmath.mpc(1e-4, 2e-4)]
    t0 = time.perf_counter()
    ev = PlaneValues(4, 22)
    setup = time.perf_counter() - t0
    with mpmath.workdps(32):
        t0 = time.perf_counter()
        fast = [ev.images(w, words) for w in nodes]
        t_fast = (time.perf_counter() - t0) / len(nodes)
        t0 = time.perf_counter()
        slow = [[sv_polylogs_numeric(words, z, 22) for z in (w, 1 - w, 1 / w)] for w in nodes]
        t_slow = (time.perf_counter() - t0) / len(nodes)
        worst = max(abs(f[i][v] - s[i][v]) / max(1, abs(s[i][v]))
                    for f, s in zip(fast, slow) for i in range(3) for v in words)
    print(f"L_w, all {len(words)} words up to weight 4, three images per node, 22 digits")
    print(f"  PlaneValues setup            {setup:8.3f} s")
    print(f"  PlaneValues per node         {t_fast * 1e3:8.2f} ms")
    print(f"  Taylor continuation per node {t_slow * 1e3:8.2f} ms   (ratio {t_slow / t_fast:.0f}x)")
    print(f"  largest difference           {mpmath.nstr(worst, 3)} (relative to max(1, |L|))")


def main() -> None:
    from lowenergy.zeta.table import build_tables

    build_tables(14)
    per_node()
    print(f"\n{'verify_sphere, level 3, digits 12':40s} {'s':>8s} {'digits':>7s} {'ok':>4s} {'peak MB':>8s}")
    for name, text, point in CASES:
        code = CHILD.replace("ROOT", repr(ROOT)).replace("TEXT", repr(text)).replace("POINT", repr(point))
        out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
        r = json.loads(out.stdout.strip().splitlines()[-1])
        print(f"{name:40s} {r['seconds']:8.1f} {r['agree']:7.1f} {str(r['consistent']):>4s} {r['peak_mb']:8.0f}")


if __name__ == "__main__":
    main()
