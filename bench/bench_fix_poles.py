"""Benchmark: fixing a single-valued ansatz from pole structure and crossing.  Prints figures only.

    LOWENERGY_CACHE_DIR=... python bench/bench_fix_poles.py [--only small|large]

An ansatz ``x^(-s-1)(1-x)^(-t-1) Σ a_{w,m} m(s,t) svpolylog(w; x)`` over every
word w of letters 0, 1 of weight 1..W plus the constant 1, times the
monomials 1, s, t, s², st, t² (W = 3: 15 functions, 90 parameters; W = 6:
127 functions, 762 parameters; the functions are not reduced to an
independent set, so the fix may leave some parameters free), constrained by

* ``[[pole]]`` tables at s = n and t = n, levels 0..10 imposed (11..13
  checked): max_order = W + 1, numerators of degree ≤ n + 2;
* ``[crossing]`` symmetric, Laurent coefficients to order 2, levels 0..10.

Every case runs in its own child process; stages: reading the integrand,
the expansion to order 2, the pole parts to level 13, and ``fix`` (building
the conditions, the exact rank level by level, the solution, the checks at
the further levels).  Peak memory is the child's ``ru_maxrss``.
Targets (issue 10): W = 3 "a few seconds" (taken as 5 s), W = 6 under 60 s
on 2 cores.
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
from lowenergy.words import all_words
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.expansion.engine import expand
from lowenergy.spectrum.residues import residues
from lowenergy.constraints import constraints_from_text, fix
from lowenergy.constraints.model import pole_levels_needed, required_order

W, LEVELS = int(sys.argv[1]), int(sys.argv[2])
words = [w for k in range(1, W + 1) for w in all_words(k)]
funcs = ["1"] + [f"svpolylog({','.join(map(str, w))}; x)" for w in words]
monos = ["1", "s", "t", "s^2", "s*t", "t^2"]
names, terms = [], []
for i, f in enumerate(funcs):
    for j, m in enumerate(monos):
        names.append(f"a{i}_{j}")
        terms.append(f"a{i}_{j}*{m}*{f}")
quoted = ", ".join(f'"{n}"' for n in names)
text = f'parameters = [{quoted}]\nintegrand = "x^(-s-1)*(1-x)^(-t-1)*({" + ".join(terms)})"\n'
cs = 'source = "benchmark (invented demands)"\n'
for var in "st":
    cs += (f'[[pole]]\nvariable = "{var}"\nlevels = {list(range(LEVELS + 1))}\nmax_order = {W + 1}\n'
           f'max_degree = "n+2"\n')
cs += f'[crossing]\nsymmetry = "symmetric"\norder = 2\nlevels = {list(range(LEVELS + 1))}\n'
times = {}
cpu0 = time.process_time()
t0 = time.perf_counter()
itg = integrand_from_text(text, "bench.toml")
sets = [constraints_from_text(cs, "bench-constraints.toml")]
times["read"] = time.perf_counter() - t0
t0 = time.perf_counter()
e = expand(itg, required_order(sets))
times["expand"] = time.perf_counter() - t0
t0 = time.perf_counter()
table = residues(itg, pole_levels_needed(sets))
times["residues"] = time.perf_counter() - t0
t0 = time.perf_counter()
report = fix(e, sets, poles=table)
times["fix"] = time.perf_counter() - t0
print(json.dumps({
    "parameters": len(names), "functions": len(funcs), "times": times,
    "total": sum(times.values()), "cpu": time.process_time() - cpu0,
    "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
    "status": report.status, "rank": report.rank, "equations": report.equations, "free": len(report.free),
    "stabilisation": [[name, rank] for name, _, rank in report.stabilisation],
    "stable_after": report.stable_after, "further_levels": list(report.further_levels),
    "further_ok": report.further_ok,
}))
"""


def run(weight: int, levels: int) -> dict:
    out = subprocess.run([sys.executable, "-c", CHILD.replace("ROOT", repr(ROOT), 1), str(weight), str(levels)],
                         capture_output=True, text=True, check=True)
    return json.loads(out.stdout.strip().splitlines()[-1])


def main() -> None:
    only = sys.argv[sys.argv.index("--only") + 1] if "--only" in sys.argv else None
    cases = [("small", 3, 10, 5.0), ("large", 6, 10, 60.0)]
    for label, weight, levels, target in cases:
        if only and label != only:
            continue
        r = run(weight, levels)
        t = r["times"]
        print(f"{label}: weight <= {weight}, {r['functions']} functions x 6 monomials = {r['parameters']} parameters, "
              f"levels 0..{levels} in s and t + crossing")
        print(f"  read {t['read']:.2f} s, expand {t['expand']:.2f} s, residues {t['residues']:.2f} s, "
              f"fix {t['fix']:.2f} s; total {r['total']:.2f} s wall = {r['total'] / target:.2f} x target {target:.0f} s "
              f"(CPU {r['cpu']:.2f} s = {r['cpu'] / target:.2f} x); "
              f"peak {r['peak_mb']:.0f} MB")
        print(f"  {r['status']}: {r['equations']} rational equations, rank {r['rank']}, {r['free']} free; "
              f"nothing more fixed after level {r['stable_after']}; further levels {r['further_levels']} "
              f"{'all pass' if r['further_ok'] else 'NOT all pass'}")
        print("  rank per step: " + ", ".join(f"{n}: {k}" for n, k in r["stabilisation"]))


if __name__ == "__main__":
    main()
