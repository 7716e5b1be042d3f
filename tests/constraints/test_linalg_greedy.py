"""greedy_independent against the one-row-at-a-time exact choice (IncrementalBasis)."""

from __future__ import annotations

import random
from fractions import Fraction

from lowenergy.linalg import IncrementalBasis, _greedy_exact, greedy_independent


def _by_hand(rows):
    basis = IncrementalBasis()
    return [j for j, r in enumerate(rows) if basis.add(r)]


def test_greedy_matches_incremental_exact_choice():
    rng = random.Random(5)
    for trial in range(30):
        ncols = rng.randint(1, 8)
        base = [{c: Fraction(rng.randint(-5, 5), rng.randint(1, 4)) for c in rng.sample(range(ncols), rng.randint(1, ncols))}
                for _ in range(rng.randint(1, 6))]
        rows = []
        for _ in range(rng.randint(1, 12)):
            # mostly combinations of a few base rows, so that dependencies occur
            r = {}
            for b in rng.sample(base, rng.randint(1, len(base))):
                f = Fraction(rng.randint(-3, 3), rng.randint(1, 3))
                for c, v in b.items():
                    r[c] = r.get(c, Fraction(0)) + f * v
            rows.append({c: v for c, v in r.items() if v})
        expected = _by_hand(rows)
        assert greedy_independent(rows, ncols) == expected, trial
        assert _greedy_exact(rows, ncols) == expected, trial
