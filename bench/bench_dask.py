"""Serial against Dask (local worker processes): table builds and expansion batches.

    python bench/bench_dask.py [--weight 13] [--order 8] [--files 16] [--max-workers 2] [--only tables|batch]

Prints figures only (no assertions):

* ``tables``: one weight of the coaction route (default 13) built from the
  lower weights (copied from ``$LOWENERGY_CACHE_DIR``, which must hold them)
  into a fresh directory: serially, then on 1, 2, ... local workers;
* ``batch``: ``--files`` invented integrands, a 186-parameter single-valued
  ansatz (words of weight ≤ 4) under the 16 factors x^(p-s-1)(1-x)^(q-t-1),
  p, q = 0..3, expanded to ``--order`` (needs tables to weight 5 + order).

Every configuration runs in a fresh process (and a fresh cluster) so that
peak memory figures are its own: "client peak" is ru_maxrss of the process
that submits (and, serially, computes), "worker peak" the largest ru_maxrss
of its worker processes (each holds its inputs: the lower tables for a table
build, its own tables and word rows for expansions).  Times are wall-clock
of the work itself (the cluster's start-up is shown separately) and CPU
seconds of the submitting process and of all workers together (their sum
against the serial CPU time is the cost of distributing: pickling, tables
loaded once per worker, duplicated shared work).  The results
of every configuration are compared with the serial one (hash of the tables
without timings / of the coefficients).  The machine may be shared: the load
average is printed before and after.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
sys.path.insert(0, str(Path(__file__).resolve().parent))


def _peak_mb() -> float:
    import resource

    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


def _cpu_s() -> float:
    import time

    return time.process_time()


def _workers_cpu(client) -> float:
    return sum(client.run(_cpu_s).values()) if client is not None else 0.0


def _batch(count: int):
    """``count`` invented integrands: an ansatz (every word of weight ≤ 4 under
    svpolylog times s^i t^j, i + j ≤ 2, one free parameter each; 186
    parameters) under the shifted factors x^(p-s-1) (1-x)^(q-t-1), p, q = 0..3."""
    from bench_ansatz_expand import ansatz
    from lowenergy.integrand.model import Integrand
    from lowenergy.integrand.reader import terms_from_expression

    text, params = ansatz(4)
    body = text.split("*", 2)[2]  # drop the factor x^(-s-1)*(1-x)^(-t-1)
    out = []
    for k in range(count):
        p, q = divmod(k % 16, 4)
        expr = f"x^({p}-s-1)*(1-x)^({q}-t-1)*{body}"
        out.append(Integrand(terms=terms_from_expression(expr, parameters=params), parameters=tuple(params)))
    return out


def child(args) -> None:
    """One configuration: prints a JSON line."""
    import hashlib
    import shutil
    import tempfile
    import time

    from lowenergy.cluster import cluster_client

    workers = args.workers or None
    t0 = time.perf_counter()
    with cluster_client(workers) as client:
        start = time.perf_counter() - t0
        if args.workload == "tables":
            from lowenergy.zeta.table import TableStore, build_tables, cache_dir

            src = cache_dir()
            tmp = Path(tempfile.mkdtemp(prefix="bench-dask-"))
            try:
                for w in range(2, args.weight):
                    for name in (f"weight-{w}.json", f"weight-{w}.meta.json"):
                        shutil.copy(src / name, tmp / name)
                store = TableStore(tmp, auto_build=False)
                store.built_weight()
                w0 = _workers_cpu(client)
                c0, t1 = time.process_time(), time.perf_counter()
                build_tables(args.weight, store, client=client)
                wall = time.perf_counter() - t1
                cpu = time.process_time() - c0
                wcpu = _workers_cpu(client) - w0
                data = json.loads((tmp / f"weight-{args.weight}.json").read_text())
                data.pop("stats")
                digest = hashlib.sha256(json.dumps(data, sort_keys=True).encode()).hexdigest()[:16]
                size = len(data["reductions"])
            finally:
                shutil.rmtree(tmp, ignore_errors=True)
        else:
            from lowenergy.batch import expand_many

            integrands = _batch(args.files)
            w0 = _workers_cpu(client)
            c0, t1 = time.process_time(), time.perf_counter()
            results = expand_many(integrands, args.order, client=client)
            wall = time.perf_counter() - t1
            cpu = time.process_time() - c0
            wcpu = _workers_cpu(client) - w0
            text = repr([sorted((k, str(v)) for k, v in e.coefficients.items()) for e in results])
            digest = hashlib.sha256(text.encode()).hexdigest()[:16]
            size = len(integrands)
        worker_peaks = list(client.run(_peak_mb).values()) if client is not None else []
    print(json.dumps({
        "workers": args.workers, "start": start, "wall": wall, "client_cpu": cpu, "workers_cpu": wcpu, "digest": digest, "size": size,
        "client_peak_mb": _peak_mb(), "worker_peak_mb": max(worker_peaks) if worker_peaks else None,
    }))


def run(workload: str, workers: int, opts) -> dict:
    cmd = [sys.executable, __file__, "--child", workload, "--workers", str(workers),
           "--weight", str(opts.weight), "--order", str(opts.order), "--files", str(opts.files)]
    out = subprocess.run(cmd, capture_output=True, text=True)
    if out.returncode:
        raise SystemExit(f"{workload} with {workers} workers failed:\n{out.stderr[-3000:]}")
    return json.loads(out.stdout.strip().splitlines()[-1])


def report(title: str, rows: list) -> None:
    print(f"\n## {title}")
    print(f"{'configuration':<16}{'wall s':>9}{'client CPU s':>14}{'workers CPU s':>15}{'cluster start s':>17}"
          f"{'client peak MB':>16}{'worker peak MB':>16}  identical")
    serial = rows[0]
    for r in rows:
        name = "serial" if r["workers"] == 0 else f"{r['workers']} worker" + ("s" if r["workers"] > 1 else "")
        peak = f"{r['worker_peak_mb']:.0f}" if r["worker_peak_mb"] else "-"
        start = f"{r['start']:.1f}" if r["workers"] else "-"
        print(f"{name:<16}{r['wall']:>9.2f}{r['client_cpu']:>14.2f}{r['workers_cpu']:>15.2f}{start:>17}{r['client_peak_mb']:>16.0f}{peak:>16}  "
              f"{r['digest'] == serial['digest']}")
    by = {r["workers"]: r["wall"] for r in rows}
    if 2 in by:
        print(f"speed-up on 2 workers: {by[0] / by[2]:.2f}x against serial, {by[1] / by[2]:.2f}x against 1 worker")
    for n in sorted(by):
        if n >= 2 and n - 1 in by:
            print(f"adding worker {n}: time x{by[n] / by[n - 1]:.2f} (ideal x{(n - 1) / n:.2f}), "
                  f"efficiency {by[1] / (n * by[n]):.0%} against 1 worker")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--child", choices=("tables", "batch"))
    ap.add_argument("--workers", type=int, default=0)
    ap.add_argument("--weight", type=int, default=13)
    ap.add_argument("--order", type=int, default=8)
    ap.add_argument("--files", type=int, default=16)
    ap.add_argument("--max-workers", type=int, default=2)
    ap.add_argument("--only", choices=("tables", "batch"))
    opts = ap.parse_args()
    if opts.child:
        opts.workload = opts.child
        child(opts)
        return
    print(f"load average before: {' '.join(f'{x:.2f}' for x in os.getloadavg())}  ({os.cpu_count()} CPUs)")
    workloads = [opts.only] if opts.only else ["tables", "batch"]
    for workload in workloads:
        rows = [run(workload, n, opts) for n in range(0, opts.max_workers + 1)]
        title = (f"table build, weight {opts.weight} ({rows[0]['size']} words)" if workload == "tables"
                 else f"expansion batch, {rows[0]['size']} shifted 186-parameter ansatz integrands, order {opts.order}")
        report(title, rows)
        print(f"load average now: {' '.join(f'{x:.2f}' for x in os.getloadavg())}")


if __name__ == "__main__":
    main()
