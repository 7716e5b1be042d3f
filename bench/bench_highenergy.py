"""Times of the high-energy and spectrum-shift checks (prints figures, asserts nothing).

Run: .venv/bin/python bench/bench_highenergy.py
"""

from __future__ import annotations

import resource
import time
from fractions import Fraction
from pathlib import Path

from lowenergy.integrand.reader import read_integrand
from lowenergy.spectrum.highenergy import high_energy, leading_term, validate_ray
from lowenergy.spectrum.residues import residues
from lowenergy.spectrum.shifts import spectrum_shifts
from lowenergy.integrand.reader import integrand_from_text

EX = Path(__file__).resolve().parents[1] / "examples"
FAMILY = [EX / "shift_flat.toml", EX / "shift_first.toml", EX / "shift_second.toml"]


def timed(label, func):
    t0 = time.perf_counter()
    c0 = time.process_time()
    out = func()
    dt = time.perf_counter() - t0
    cpu = time.process_time() - c0
    print(f"{label:75s} {dt:8.2f} s wall {cpu:8.2f} s CPU")
    return out


def main():
    itgs = [read_integrand(f) for f in FAMILY]
    timed("exact saddle terms + A2 = A1^2/2 on 9 angles (example family)", lambda: high_energy(itgs))
    heavy = integrand_from_text('integrand = "x^(-s-1)*(1-x)^(-t-1)*(s^2*t^2*G(0,1,0,1; x) + s*t*zeta(3)*Li(3, x))"')
    timed("exact saddle terms of a weight-4 insertion (one file)", lambda: leading_term(heavy))
    sphere = [read_integrand(EX / f"shift_sphere_{k}.toml") for k in ("flat", "first", "second")]
    timed("sphere: exact saddle terms + A2 = A1^2/2 on 9 angles (example family)", lambda: high_energy(sphere))
    sheavy = integrand_from_text('domain = "sphere"\nvariables = ["S", "T"]\nintegrand = '
                                 '"abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*S^2*T^2*svpolylog(0,0,1,1; z)"')
    timed("sphere: exact saddle terms of L_0011 (one file)", lambda: leading_term(sheavy))
    lt = leading_term(itgs[2])
    timed("quadrature on one ray, s = -10, -50, -200 (order-2 file, 20 digits)",
          lambda: validate_ray(itgs[2], lt, Fraction(1, 2), [-10, -50, -200], digits=20))
    lth = leading_term(heavy)
    timed("quadrature on one ray, s = -10, -50, -200 (weight-4 insertion, 20 digits)",
          lambda: validate_ray(heavy, lth, Fraction(1, 3), [-10, -50, -200], digits=20))
    for levels in (5, 20):
        timed(f"spectrum shifts, 3 orders, levels 1..{levels} (residues + partial waves)",
              lambda: spectrum_shifts([residues(i, levels) for i in itgs], 10))
    print(f"peak resident memory of the process: {resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024:.0f} MB")


if __name__ == "__main__":
    main()
