"""Benchmarks of the single-valued polylogarithms (lowenergy.svpolylog).  Prints figures only.

    LOWENERGY_CACHE_DIR=... python bench/bench_svpolylog.py

* all L_w up to weight 6 and 8 (the table of antiholomorphic parts A_s, then
  every L_w = Σ c G(u; z) G(v; z̄) and its restriction to 0 < x < 1):
  - from scratch: a fresh process, empty in-process cache, ``use_disk=False``
    (nothing read from or written to the svpolylog JSON cache);
  - cold from the JSON cache: a fresh process reading
    ``<cache>/svpolylog-weight-N.json`` (written first if missing);
  - warm: the same call again in the same process (in-process cache).
  The MZV tables of weights 2..N are loaded first and timed separately.
* the integrand ``x^(-s-1)*(1-x)^(-t-1)*svpolylog(0,0,1,0,1,1; x)`` read and expanded
  to order 8 (coefficients up to weight 15: MZV tables to weight 15 are
  built first if missing, and that time is reported separately), cold (fresh
  process) and warm (second expansion in the same process).

Every measurement runs in its own child process; peak memory is the child's
``ru_maxrss`` (resource.getrusage).
"""

from __future__ import annotations

import json
import subprocess
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

ROOT = str(Path(__file__).resolve().parents[1])

PRELUDE = r"""
import json, resource, sys, time
sys.path.insert(0, ROOT)
from lowenergy.zeta.table import default_store

def peak_mb():
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024

def load_mzv_tables(n):
    store = default_store()
    t0 = time.perf_counter()
    for w in range(2, n + 1):
        store.reduction((w,))          # loads weight w
    store.all_generators(n)
    return store, time.perf_counter() - t0
"""

SV_CHILD = PRELUDE + r"""
from lowenergy.svpolylog import construct
from lowenergy.words import all_words
mode, n = sys.argv[1], int(sys.argv[2])
store, t_mzv = load_mzv_tables(n)
json_path = construct._json_path(store, n)
json_before = json_path.exists()
t0 = time.perf_counter()
table = construct.sv_table(n, store, use_disk=(mode != "scratch"))
t_table = time.perf_counter() - t0
t0 = time.perf_counter()
words = [w for k in range(n + 1) for w in all_words(k)]
terms = {w: table.terms(w) for w in words}
t_terms = time.perf_counter() - t0
t0 = time.perf_counter()
real = {w: table.real_line(w) for w in words}
t_real = time.perf_counter() - t0
t0 = time.perf_counter()
again = construct.sv_table(n, store)
t_warm = time.perf_counter() - t0
print(json.dumps({
    "mzv_load": t_mzv, "table": t_table, "terms": t_terms, "real_line": t_real, "warm": t_warm,
    "words": len(words), "pairs": sum(len(t) for t in terms.values()),
    "real_words": sum(len(r) for r in real.values()),
    "json_before": json_before, "json_after": json_path.exists(),
    "json_mb": json_path.stat().st_size / 2**20 if json_path.exists() else 0.0,
    "same_object": again is table, "peak_mb": peak_mb(),
}))
"""

EXPAND_CHILD = PRELUDE + r"""
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.expansion.engine import expand
from lowenergy.svpolylog import construct
word, order = sys.argv[1], int(sys.argv[2])
store = default_store()
sv_json = construct._json_path(store, max(6, len(word.split(",")))).exists()
text = f'integrand = "x^(-s-1)*(1-x)^(-t-1)*svpolylog({word}; x)"'
t0 = time.perf_counter()
itg = integrand_from_text(text, source="bench")
t_read = time.perf_counter() - t0
t0 = time.perf_counter()
e = expand(itg, order)
t_cold = time.perf_counter() - t0
t0 = time.perf_counter()
e2 = expand(itg, order)
t_warm = time.perf_counter() - t0
weights = [sum(map(sum, mono)) for poly in e.coefficients.values() for x in poly.values() for mono, _ in x.terms()]
print(json.dumps({
    "read": t_read, "cold": t_cold, "warm": t_warm, "same": e.coefficients == e2.coefficients,
    "g_words": len(itg.terms), "laurent_terms": len(e.coefficients), "max_weight": max(weights),
    "sv_json_cached": sv_json, "peak_mb": peak_mb(),
}))
"""


def run(code: str, *args: str, timeout: float = 1800) -> dict:
    code = f"ROOT = {ROOT!r}\n" + code
    out = subprocess.run([sys.executable, "-c", code, *args], capture_output=True, text=True, timeout=timeout)
    if out.returncode:
        raise SystemExit(out.stderr)
    return json.loads(out.stdout.strip().splitlines()[-1])


def main() -> None:
    from lowenergy.zeta.table import build_tables, default_store

    store = default_store()
    print(f"cache directory: {store.directory}")
    have = store.built_weight()
    if have < 15:
        t0 = time.perf_counter()
        build_tables(15, store)
        print(f"built MZV tables from weight {have + 1} to 15 in {time.perf_counter() - t0:.1f} s (one-time, cached)")
    else:
        print(f"MZV tables to weight {have} found (weight 15 needed)")

    print("\nall L_w up to weight N (fresh process each):")
    for n in (6, 8):
        r = run(SV_CHILD, "scratch", str(n))
        print(
            f"  weight {n}, from scratch : table {r['table']:7.3f} s, all L_w as G(u;z)G(v;z̄) {r['terms']:6.3f} s, "
            f"real-line restrictions {r['real_line']:6.3f} s, warm {r['warm'] * 1e6:5.1f} µs "
            f"(+ MZV tables 2..{n} loaded in {r['mzv_load']:.3f} s); "
            f"{r['words']} words, {r['pairs']} (u,v) terms, {r['real_words']} real-line G-terms; "
            f"peak {r['peak_mb']:.0f} MB"
        )
        prep = run(SV_CHILD, "disk", str(n))  # writes the JSON if missing
        r = run(SV_CHILD, "disk", str(n))
        note = "" if r["json_before"] else " [JSON missing: this was a build]"
        print(
            f"  weight {n}, cold from JSON: table {r['table']:7.3f} s, all L_w {r['terms']:6.3f} s, "
            f"real-line {r['real_line']:6.3f} s (+ MZV tables {r['mzv_load']:.3f} s); "
            f"JSON {r['json_mb']:.2f} MB{' (written by the preceding run)' if not prep['json_before'] else ''}; "
            f"peak {r['peak_mb']:.0f} MB{note}"
        )

    print("\nintegrand x^(-s-1)*(1-x)^(-t-1)*svpolylog(0,0,1,0,1,1; x), order 8 (fresh process):")
    r = run(EXPAND_CHILD, "0,0,1,0,1,1", "8")
    print(
        f"  read (incl. L_w table{' from JSON' if r['sv_json_cached'] else ' build'}) {r['read']:.3f} s, "
        f"expand cold {r['cold']:.2f} s, warm {r['warm']:.3f} s; "
        f"{r['g_words']} G-word terms, {r['laurent_terms']} Laurent terms up to weight {r['max_weight']}, "
        f"identical: {r['same']}, peak {r['peak_mb']:.0f} MB"
    )


if __name__ == "__main__":
    main()
