"""Benchmarks of ansatz-sized and shifted expansions (issue 14).  Prints figures only.

    python bench/bench_ansatz_expand.py [--termwise] [--only NAME]

* The single-valued ansatz ``x^(-s-1)(1-x)^(-t-1) Σ a_(w,i,j) s^i t^j svpolylog(w; x)``
  over all words w of weight ≤ W and monomials of degree ≤ 2 (invented; built
  here programmatically): W = 3 (90 parameters) at order 10, W = 6 (762
  parameters) at orders 6 and 10.  Targets: < 2 s, < 5 s, < 60 s warm.
* Shifted exponents: G(0,0,1,0,0,1; x) at order 10 with x^(-s+1) against
  x^(-s-1) (both with (1-x)^(-t-1)); x^(1-s)(1-x)^(1-t) G(0,1,0; 1-x) Li(3, x)
  at orders 8 and 10 against the unshifted x^(-s-1)(1-x)^(-t-1).  Target: the
  shifted one within 3× of the unshifted one.

Each case runs in a fresh process: the integrand is read (reader time shown
separately), expanded once ("cold": loads tables and word rows) and again
("warm"); wall-clock and CPU seconds (the machine may be shared: CPU time is
the figure that does not depend on other load), peak memory (ru_maxrss).
``--termwise`` also runs the reference path (``method="termwise"``, the engine
before issue 14) on the cases where it finishes in minutes.
Needs MZV tables to weight 17 (``lowenergy tables build --weight 17``).
"""

from __future__ import annotations

import argparse
import json
import subprocess
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

CHILD = r"""
import itertools, json, resource, sys, time
from lowenergy.integrand.model import Integrand
from lowenergy.integrand.reader import terms_from_expression
from lowenergy.expansion.engine import expand

text, params, order, method = sys.argv[1], json.loads(sys.argv[2]), int(sys.argv[3]), sys.argv[4]
t0 = time.perf_counter()
integrand = Integrand(terms=terms_from_expression(text, parameters=params), parameters=tuple(params))
read = time.perf_counter() - t0
out = {"read": read, "terms": len(integrand.terms)}
for label in ("cold", "warm"):
    c0, t0 = time.process_time(), time.perf_counter()
    e = expand(integrand, order, method=method)
    out[label] = time.perf_counter() - t0
    out[label + "_cpu"] = time.process_time() - c0
out["coefficients"] = sum(len(v) for v in e.coefficients.values())
out["peak_mb"] = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
print(json.dumps(out))
"""


def ansatz(max_weight: int, max_degree: int = 2):
    """Invented single-valued ansatz: every word of weight ≤ max_weight times s^i t^j, i + j ≤ max_degree."""
    params, parts = [], []
    for n in range(max_weight + 1):
        for w in __import__("itertools").product((0, 1), repeat=n):
            for d in range(max_degree + 1):
                for i in range(d, -1, -1):
                    name = "a" + "".join(map(str, w)) + f"_{i}{d - i}"
                    params.append(name)
                    f = f"svpolylog({','.join(map(str, w))}; x)" if w else "1"
                    parts.append(f"{name}*s^{i}*t^{d - i}*{f}")
    return "x^(-s-1)*(1-x)^(-t-1)*(" + " + ".join(parts) + ")", params


W6 = "G(0,0,1,0,0,1; x)"
MIXED = "G(0,1,0; 1-x)*Li(3, x)"
CASES = [
    # name, text, params, order, target seconds (warm), termwise feasible
    ("ansatz W<=3 (90 params), order 10", *ansatz(3), 10, 2.0, True),
    ("ansatz W<=6 (762 params), order 6", *ansatz(6), 6, 5.0, True),
    ("ansatz W<=6 (762 params), order 10", *ansatz(6), 10, 60.0, False),
    ("G(0,0,1,0,0,1;x) x^(-s-1)(1-x)^(-t-1), order 10", f"x^(-s-1)*(1-x)^(-t-1)*{W6}", [], 10, None, True),
    ("G(0,0,1,0,0,1;x) x^(-s+1)(1-x)^(-t-1), order 10", f"x^(-s+1)*(1-x)^(-t-1)*{W6}", [], 10, None, False),
    ("G(0,1,0;1-x)Li3 x^(-s-1)(1-x)^(-t-1), order 8", f"x^(-s-1)*(1-x)^(-t-1)*{MIXED}", [], 8, None, True),
    ("G(0,1,0;1-x)Li3 x^(1-s)(1-x)^(1-t), order 8", f"x^(1-s)*(1-x)^(1-t)*{MIXED}", [], 8, None, False),
    ("G(0,1,0;1-x)Li3 x^(-s-1)(1-x)^(-t-1), order 10", f"x^(-s-1)*(1-x)^(-t-1)*{MIXED}", [], 10, None, True),
    ("G(0,1,0;1-x)Li3 x^(1-s)(1-x)^(1-t), order 10", f"x^(1-s)*(1-x)^(1-t)*{MIXED}", [], 10, None, False),
]
# shifted case -> its unshifted partner (target: ratio < 3)
PAIRS = {4: 3, 6: 5, 8: 7}


def run(text, params, order, method, timeout=3600):
    out = subprocess.run(
        [sys.executable, "-c", CHILD, text, json.dumps(params), str(order), method],
        capture_output=True, text=True, timeout=timeout,
    )
    if out.returncode:
        raise SystemExit(out.stderr)
    return json.loads(out.stdout)


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--termwise", action="store_true", help="also time the reference path")
    parser.add_argument("--only", default="", help="run the cases whose name contains this text")
    args = parser.parse_args()
    from lowenergy.zeta.table import default_store

    store = default_store()
    if store.built_weight() < 17:
        raise SystemExit(f"needs MZV tables to weight 17 in {store.directory}: run `lowenergy tables build --weight 17`")
    results = {}
    for k, (name, text, params, order, target, termwise_ok) in enumerate(CASES):
        if args.only and args.only not in name:
            continue
        r = run(text, params, order, "bulk")
        results[k] = r
        line = (f"{name}: read {r['read']:.2f} s; bulk cold {r['cold']:.2f} s ({r['cold_cpu']:.2f} CPU), "
                f"warm {r['warm']:.2f} s ({r['warm_cpu']:.2f} CPU), peak {r['peak_mb']:.0f} MB, "
                f"{r['coefficients']} coefficients")
        if target:
            line += f"  [target < {target:g} s: warm ratio {r['warm'] / target:.2f}, CPU ratio {r['warm_cpu'] / target:.2f}]"
        if k in PAIRS and PAIRS[k] in results:
            base = results[PAIRS[k]]
            line += (f"  [shifted/unshifted: warm {r['warm'] / base['warm']:.2f}, "
                     f"CPU {r['warm_cpu'] / max(base['warm_cpu'], 1e-9):.2f}; target < 3]")
        print(line, flush=True)
        if args.termwise and termwise_ok:
            t = run(text, params, order, "termwise")
            print(f"    termwise (reference path): warm {t['warm']:.2f} s ({t['warm_cpu']:.2f} CPU), "
                  f"peak {t['peak_mb']:.0f} MB; bulk speed-up {t['warm_cpu'] / max(r['warm_cpu'], 1e-9):.1f}× CPU",
                  flush=True)


if __name__ == "__main__":
    main()
