"""High-weight MZV tables: size on disk, build figures, and what one use costs.

Prints, for every built weight from 14 up (of the cache in
LOWENERGY_CACHE_DIR, or the directory given with --dir):

* the size of the weight's files and its number of words;
* the build figures stored in its meta file (coaction and numerics seconds,
  primes used; wall-clock seconds of the building process);
* for the highest weight: time and peak memory of a fresh process that
  reduces one MZV of that weight (`lowenergy reduce`, and the same through
  the Python API), which reads one word of the table, not the file;
* an extrapolation of size and build cost to the next two weights from the
  measured ratio of the last two (an estimate, printed as such).

Asserts nothing.  Build the tables first, e.g.

    LOWENERGY_CACHE_DIR=/path .venv/bin/lowenergy tables build --weight 20 --no-rows
    LOWENERGY_CACHE_DIR=/path .venv/bin/python bench/bench_tables_high.py
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from lowenergy.zeta.table import FORMAT_VERSION, TableStore, cache_dir  # noqa: E402

PROBE = """
import resource, sys, time
t0 = time.perf_counter()
from lowenergy.zeta.table import TableStore
store = TableStore(sys.argv[1], auto_build=False)
red = store.reduction(tuple(int(n) for n in sys.argv[2].split(",")))
print(len(red), time.perf_counter() - t0, resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024)
"""


def probe(directory: Path, idx) -> str:
    out = subprocess.run([sys.executable, "-c", PROBE, str(directory), ",".join(map(str, idx))],
                         capture_output=True, text=True, check=True).stdout.split()
    return f"{out[0]} terms, {float(out[1]):.2f} s, peak {float(out[2]):.0f} MB"


def cli_probe(directory: Path, expr: str) -> str:
    env = dict(os.environ, LOWENERGY_CACHE_DIR=str(directory.parent))
    exe = Path(sys.executable).parent / "lowenergy"
    t0 = time.perf_counter()
    res = subprocess.run(["/usr/bin/time", "-f", "%M", str(exe), "reduce", expr], capture_output=True, text=True,
                         env=env)
    wall = time.perf_counter() - t0
    peak_kb = res.stderr.strip().splitlines()[-1]
    return f"exit {res.returncode}, {wall:.2f} s wall, peak {int(peak_kb) / 1024:.0f} MB"


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--dir", type=Path, default=None, help=f"table directory (default: the cache's mzv-v{FORMAT_VERSION})")
    args = ap.parse_args()
    directory = args.dir or cache_dir()
    store = TableStore(directory, auto_build=False)
    top = store.built_weight()
    print(f"tables in {directory}: built to weight {top}")
    rows = []
    for w in range(14, top + 1):
        size = store.path(w).stat().st_size + store.meta_path(w).stat().st_size
        st = store.stats(w)
        rows.append((w, size, st))
        extra = ""
        if "coaction_s" in st:
            extra = f"coaction {st['coaction_s']:.0f} s, numerics {st['numerics_s']:.0f} s, {st.get('primes')} primes"
        if "converted_from_format" in st:
            extra += " (converted from format 2)"
        print(f"  weight {w}: {size / 1e6:8.1f} MB on disk, {2 ** (w - 2):7d} words, total {st.get('total_s', 0):.0f} s wall; {extra}")
    if top >= 14:
        idx = (top - 10, 8, 2)  # a depth-3 word with many terms
        print(f"one reduction of weight {top}, fresh process (Python API), zeta{idx}: {probe(directory, idx)}")
        expr = "zeta(" + ",".join(map(str, idx)) + ")"
        print(f"`lowenergy reduce \"{expr}\"`, fresh process: {cli_probe(directory, expr)}")
    if len(rows) >= 2:
        (w1, s1, _), (w2, s2, _) = rows[-2], rows[-1]
        ratio = s2 / s1
        print(f"size ratio weight {w2}/{w1}: {ratio:.2f}; estimate (extrapolated, not measured): "
              f"weight {w2 + 1} ~{s2 * ratio / 1e9:.1f} GB, weight {w2 + 2} ~{s2 * ratio ** 2 / 1e9:.1f} GB")


if __name__ == "__main__":
    main()
