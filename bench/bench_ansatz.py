"""Benchmarks of the ansatz generator (lowenergy.ansatz).  Prints figures only.

    LOWENERGY_CACHE_DIR=... python bench/bench_ansatz.py

For each case, in a fresh process: the time to generate the ansatz (real-line
restrictions, exact independence with fmpq_mat, the parameter terms) with the
L_w table read from its JSON cache (written first if missing), the time to
render the integrand file, and the time for the integrand reader to read the
file back; counts of candidates, independent functions and parameters; peak
memory (the child's ru_maxrss).

Cases: the single-valued family with MZV constants (every total weight up to
W) and all monomials s^i t^j of degree ≤ 2 at W = 3 and W = 6, plus the
same with s <-> t symmetry, and the G-word family at W = 6 for comparison.
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
from lowenergy.ansatz.generate import AnsatzSpec, generate
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.svpolylog.construct import sv_table
spec = AnsatzSpec(**json.loads(sys.argv[1]))
t0 = time.perf_counter()
if spec.family == "sv":
    sv_table(max(spec.weight, 6))      # from the JSON cache (or built once)
t_table = time.perf_counter() - t0
t0 = time.perf_counter()
a = generate(spec)
t_gen = time.perf_counter() - t0
t0 = time.perf_counter()
text = a.to_toml()
t_text = time.perf_counter() - t0
t0 = time.perf_counter()
itg = integrand_from_text(text, source="bench")
t_read = time.perf_counter() - t0
print(json.dumps({"table": t_table, "generate": t_gen, "render": t_text, "read": t_read,
                  "functions": a.functions, "independent": a.independent_functions,
                  "parameters": len(a.terms), "g_terms": len(itg.terms), "kb": len(text) / 1024,
                  "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}))
"""

CASES = [
    ("sv, W=3, MZV constants, degree <= 2", dict(weight=3, family="sv", mzv=True, degree=2)),
    ("sv, W=6, MZV constants, degree <= 2", dict(weight=6, family="sv", mzv=True, degree=2)),
    ("sv, W=6, MZV, degree <= 2, s<->t symmetric", dict(weight=6, family="sv", mzv=True, degree=2, symmetry="symmetric")),
    ("mpl, W=6, MZV constants, degree <= 2", dict(weight=6, family="mpl", mzv=True, degree=2)),
]


def run(spec: dict) -> dict:
    code = f"ROOT = {ROOT!r}\n" + CHILD
    out = subprocess.run([sys.executable, "-c", code, json.dumps(spec)], capture_output=True, text=True, timeout=1800)
    if out.returncode:
        raise SystemExit(out.stderr)
    return json.loads(out.stdout.strip().splitlines()[-1])


def main() -> None:
    sys.path.insert(0, ROOT)
    from lowenergy.zeta.table import build_tables, default_store

    store = default_store()
    print(f"cache directory: {store.directory}")
    if store.built_weight() < 12:
        build_tables(12, store)
    run(dict(weight=6, family="sv"))  # writes the L_w JSON cache if missing
    for label, spec in CASES:
        r = run(spec)
        print(
            f"{label:46s}: {r['functions']:4d} candidates, {r['independent']:4d} independent, "
            f"{r['parameters']:5d} parameters; generate {r['generate']:.2f} s "
            f"(L_w table {r['table']:.2f} s before), render {r['render'] * 1e3:.0f} ms, "
            f"read back {r['read']:.2f} s ({r['g_terms']} G-word terms, {r['kb']:.0f} KB); peak {r['peak_mb']:.0f} MB"
        )


if __name__ == "__main__":
    main()
