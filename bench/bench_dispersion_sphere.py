"""Benchmark of fixed-T dispersion sums on sphere integrands.  Prints figures only.

    LOWENERGY_CACHE_DIR=... python bench/bench_dispersion_sphere.py

For the closed-string factor ``abs(z)^(-2*S-2)*abs(1-z)^(-2*T)`` and the
complex Beta function ``abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)`` at 30 and 60
levels: the time of the residues (S, T and U channels), the time of the sums
of every ``S^k T^j`` with ``1 <= k``, ``k + j <= 4`` and the digits of
agreement with the exact expansion (non-zero coefficients), in a fresh child
process each; peak memory is the child's ``ru_maxrss``.
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
from lowenergy.svpolylog.sphere_residues import sphere_residues
from lowenergy.spectrum.dispersion import check_dispersion
itg = integrand_from_text('domain = "sphere"\nvariables = ["S", "T"]\nintegrand = "' + SOURCE + '"')
t0 = time.process_time()
table = sphere_residues(itg, LEVELS)
t1 = time.process_time()
ex = expand_sphere(itg, 4)
digits = {}
for total in range(1, 5):
    for k in range(1, total + 1):
        r = check_dispersion(itg, k, total - k, table=table, expansion=ex)
        if r.exact:   # rows with exact value 0 left out (their digits would be absolute)
            digits[f"{k},{total - k}"] = round(min(r.digits, 30), 1)
t2 = time.process_time()
print(json.dumps({"residues": t1 - t0, "sums": t2 - t1, "digits": digits,
                  "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}))
"""

CASES = [
    ("closed-string factor", "abs(z)^(-2*S-2)*abs(1-z)^(-2*T)"),
    ("complex Beta function", "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)"),
]


def main() -> None:
    from lowenergy.zeta.table import build_tables

    build_tables(14)
    print(f"{'case':24s} {'levels':>6s} {'residues s':>10s} {'sums s':>7s} {'peak MB':>8s}  digits (k,j: digits)")
    for name, text in CASES:
        for levels in (30, 60):
            code = CHILD.replace("ROOT", repr(ROOT)).replace("SOURCE", repr(text)).replace(
                "LEVELS", str(levels))
            out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
            r = json.loads(out.stdout.strip().splitlines()[-1])
            digits = " ".join(f"{key}: {d}" for key, d in r["digits"].items())
            print(f"{name:24s} {levels:6d} {r['residues']:10.2f} {r['sums']:7.2f} {r['peak_mb']:8.0f}  {digits}")


if __name__ == "__main__":
    main()
