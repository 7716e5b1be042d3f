"""Benchmarks of sphere residues and of fixing a sphere ansatz from its poles.  Prints figures only.

    LOWENERGY_CACHE_DIR=... python bench/bench_sphere_residues.py

* poles of the closed-string factor ``abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)`` to level 10;
* poles of a weight-4 insertion ``svpolylog(0,0,1,1; z)`` to level 6;
* poles of a generated ansatz (``ansatz --weight 3 --degree 2 --symmetry
  symmetric --domain sphere``, 50 parameters) to level 3.

Each runs in a fresh child process (read + residues; MZV tables to weight 14
already built); ``warm`` repeats the computation in the same process; peak
memory is the child's ``ru_maxrss``.
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
from lowenergy.svpolylog.sphere_residues import sphere_residues
TEXT = SOURCE
if TEXT.startswith("ansatz:"):
    from lowenergy.ansatz.generate import AnsatzSpec, generate
    TEXT = generate(AnsatzSpec(weight=3, degree=2, symmetry="symmetric", domain="sphere")).to_toml()
else:
    TEXT = 'domain = "sphere"\nvariables = ["S", "T"]\nintegrand = "' + TEXT + '"'
t0 = time.perf_counter()
itg = integrand_from_text(TEXT)
r = sphere_residues(itg, LEVELS)
t1 = time.perf_counter()
r2 = sphere_residues(itg, LEVELS)
t2 = time.perf_counter()
print(json.dumps({"cold": t1 - t0, "warm": t2 - t1, "rows": len(r.to_rows(5)),
                  "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}))
"""

CASES = [
    ("closed-string factor, levels 10", "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)", 10),
    ("weight-4 insertion L_0011, levels 6", "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*svpolylog(0,0,1,1; z)", 6),
    ("generated ansatz (50 params), levels 3", "ansatz:", 3),
]


def main() -> None:
    from lowenergy.zeta.table import build_tables

    build_tables(14)
    print(f"{'case':42s} {'cold s':>8s} {'warm s':>8s} {'rows':>5s} {'peak MB':>8s}")
    for name, text, levels in CASES:
        code = CHILD.replace("ROOT", repr(ROOT)).replace("SOURCE", repr(text)).replace("LEVELS", str(levels))
        out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
        r = json.loads(out.stdout.strip().splitlines()[-1])
        print(f"{name:42s} {r['cold']:8.2f} {r['warm']:8.2f} {r['rows']:5d} {r['peak_mb']:8.0f}")


if __name__ == "__main__":
    main()
