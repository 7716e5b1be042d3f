"""Reduction of one weight through the motivic coaction (for high weights).

A second, independent route to the tables of :mod:`lowenergy.zeta.reduction`,
which scales to weights the double-shuffle linear algebra cannot reach on a
laptop.  F. Brown, "On the decomposition of motivic multiple zeta values",
Adv. Stud. Pure Math. 63 (2012): the infinitesimal coaction

    D_r I(a0; a1..aN; a_{N+1}) = Σ_p I^L(a_p; a_{p+1}..a_{p+r}; a_{p+r+1})
                                   ⊗ I(a0; a1..a_p, a_{p+r+1}..aN; a_{N+1})

determines the f-alphabet image φ(ξ) of a weight-N element up to a rational
multiple of the top element (f_N for odd N, f2^(N/2) for even N), and the
kernel of the coaction in weight N is Q·ζ(N).  Hence, for every word w,

    G(w; 1) = Σ_i a_i b_i + c · top,

where the b_i are the weight-N basis monomials other than the top one, the
rationals a_i solve a linear system on the non-top f-coordinates (exact,
modulo several primes, then rational reconstruction), and the single
rational c is fixed numerically from high-precision values (the residual
must be a small-height rational multiple of ζ(N), checked to ~10^-(digits-10);
otherwise the build stops with an error).

All word values of lower weights (regularized, all 2^k words) are handled as
integer matrices modulo 26-bit primes with numpy, so that products fit in
int64.  The generators of weight N are chosen with the same preference order
as the double-shuffle route, and the two routes give identical tables where
both run (tested up to weight 12).
"""

from __future__ import annotations

import time
from fractions import Fraction
from math import gcd, isqrt
from typing import Callable, Dict, Iterator, List, Sequence, Tuple

import numpy as np

from ..errors import InternalError
from ..words import Indices, admissible_indices, indices_to_word, word_to_indices
from .falphabet import FKey, monomial_falphabet
from ..linalg import crt_rational, to_mod
from .reduction import Monomial, WeightTable, generator_preference, monomials_of_weight

__all__ = ["reduce_weight_motivic", "f_monomials", "SMALL_PRIMES"]

#: The sixteen largest primes below 2^26, largest first (sympy.prevprime;
#: checked in tests).  Entries stay below 2^26, so a dot product of up to 64
#: terms fits in int64.  A weight uses the fewest primes that make the
#: rational reconstruction stable (confirmed by one more).  Eight sufficed up
#: to weight 18; at weight 19 reconstruction failed with eight (measured).
SMALL_PRIMES = (
    67108859, 67108837, 67108819, 67108777, 67108763, 67108757, 67108753, 67108747,
    67108739, 67108729, 67108721, 67108709, 67108693, 67108669, 67108667, 67108661,
)

#: Words finished together in a serial build (reconstruction, top
#: coefficient, written out): bounds the rationals held in memory at once.
CHUNK_WORDS = 8192


def f_monomials(weight: int) -> List[FKey]:
    """Basis of the f-alphabet in one weight: f2^k times words in f3, f5, ..."""
    out: List[FKey] = []

    def words(rem: int) -> List[Tuple[int, ...]]:
        if rem == 0:
            return [()]
        res = []
        for a in range(3, rem + 1, 2):
            for rest in words(rem - a):
                res.append((a,) + rest)
        return res

    for k in range(weight // 2 + 1):
        for w in words(weight - 2 * k):
            out.append((k, w))
    return out


class _PrimeData:
    """Word values and f-images of all lower weights modulo one prime."""

    def __init__(self, p: int, store) -> None:
        self.p = p
        self.store = store
        self.values: Dict[int, np.ndarray] = {}
        self.fimages: Dict[int, np.ndarray] = {}
        self.basis: Dict[int, List[Monomial]] = {}

    def basis_of(self, k: int) -> List[Monomial]:
        if k not in self.basis:
            gens = self.store.all_generators(k) if k >= 2 else []
            self.basis[k] = monomials_of_weight(gens, k) if k else [()]
        return self.basis[k]

    def word_values(self, k: int) -> np.ndarray:
        """(2^k × d_k) values of all words of weight k, mod p (cached): the
        classes of :meth:`word_values_of_class` put together.  (A separate
        pass over all 2^k words at once was 15% faster at k = 15, measured,
        and the same code twice; these matrices are a small part of a build.)"""
        if k in self.values:
            return self.values[k]
        out = np.zeros((1 << k, len(self.basis_of(k))), dtype=np.int64)
        for ones in range(k + 1):
            idx, vals = self.word_values_of_class(k, ones)
            out[idx] = vals
        self.values[k] = out
        return out

    def word_values_of_class(self, k: int, ones: int) -> Tuple[np.ndarray, np.ndarray]:
        """``(indices, values)``: the words of weight k with ``ones`` letters 1 and
        their values mod p — the rows of :meth:`word_values` for one class.

        The regularization recursion never leaves a class (inserting a letter
        into a shuffle keeps the numbers of zeros and ones), so the 2^k rows can
        be built one class at a time: at most C(k, k/2) rows in memory instead
        of 2^k (a factor ≈ sqrt(πk/2) less).  Nothing is cached.
        """
        p = self.p
        basis = self.basis_of(k)
        col = {m: i for i, m in enumerate(basis)}
        d = len(basis)
        n = 1 << k
        if k == 0:
            return np.zeros(1, dtype=np.int64), np.ones((1, 1), dtype=np.int64)
        members = np.arange(n, dtype=np.int64)
        pc = np.zeros(n, dtype=np.int64)
        for b in range(k):
            pc += (members >> b) & 1
        members = members[pc == ones]
        del pc
        rank = {int(w): r for r, w in enumerate(members.tolist())} if len(members) < 4096 else None
        if rank is None:
            lookup = np.full(n, -1, dtype=np.int32)
            lookup[members] = np.arange(len(members), dtype=np.int32)
        out = np.zeros((len(members), d), dtype=np.int64)

        def at(words: np.ndarray) -> np.ndarray:
            if rank is not None:
                return np.array([rank[int(w)] for w in words], dtype=np.int64)
            return lookup[words]

        tz = np.zeros(len(members), dtype=np.int64)
        lo = np.zeros(len(members), dtype=np.int64)
        for b in range(k):
            still = (tz == b) & (((members >> b) & 1) == 0)
            tz[still] = b + 1
        for b in range(k):
            still = (lo == b) & (((members >> (k - 1 - b)) & 1) == 1)
            lo[still] = b + 1
        for r in np.nonzero((tz == 0) & (lo == 0))[0].tolist():
            i = int(members[r])
            w = tuple((i >> (k - 1 - j)) & 1 for j in range(k))
            ind = word_to_indices(w)
            sign = -1 if len(ind) % 2 else 1
            for mono, num, den in self.store.reduction_raw(ind):
                out[r, col[mono]] = (sign * (num % p) * pow(den % p, -1, p)) % p
        # Regularization recursion, vectorized over the words of the class
        # with the same number tz of trailing zeros and lo of leading ones
        # (see lowenergy.words.regularize_word): every dependency lies in a
        # group processed earlier (tz - 1, or tz = 0 and lo - 1).
        for m in range(1, k):
            sel = np.nonzero((tz == 0) & (lo == m))[0]
            if len(sel) == 0:
                continue
            length_u = k - m
            u = members[sel] & ((1 << length_u) - 1)
            acc = np.zeros((len(sel), d), dtype=np.int64)
            for j in range(1, length_u + 1):
                top_u = u >> (length_u - j)
                low_u = u & ((1 << (length_u - j)) - 1)
                new_u = (((top_u << 1) | 1) << (length_u - j)) | low_u
                new = (((1 << (m - 1)) - 1) << (length_u + 1)) | new_u
                acc = (acc + out[at(new)]) % p
            out[sel] = (-acc * pow(m, -1, p)) % p
        for m in range(1, k):
            sel = np.nonzero(tz == m)[0]
            if len(sel) == 0:
                continue
            length_u = k - m
            u = members[sel] >> m
            acc = np.zeros((len(sel), d), dtype=np.int64)
            for j in range(length_u):
                top_u = u >> (length_u - j)
                low_u = u & ((1 << (length_u - j)) - 1)
                new_u = (top_u << (length_u - j + 1)) | low_u
                new = new_u << (m - 1)
                acc = (acc + out[at(new)]) % p
            out[sel] = (-acc * pow(m, -1, p)) % p
        return members, out

    def f_images(self, k: int, fbasis: Dict[int, Dict[FKey, int]]) -> np.ndarray:
        """(2^k × dim U_k) f-alphabet images of all words of weight k, mod p."""
        if k in self.fimages:
            return self.fimages[k]
        p = self.p
        basis = self.basis_of(k)
        fidx = fbasis[k]
        phi = np.zeros((len(basis), len(fidx)), dtype=np.int64)
        for a, mono in enumerate(basis):
            for key, c in monomial_falphabet(mono, self.store).items():
                phi[a, fidx[key]] = to_mod(c, p)
        vals = self.word_values(k)
        res = np.zeros((vals.shape[0], len(fidx)), dtype=np.int64)
        # chunked products keep every partial sum below 2^63
        for start in range(0, vals.shape[1], 32):
            res = (res + vals[:, start : start + 32] @ phi[start : start + 32]) % p
        self.fimages[k] = res
        return res


def _bit_reverse_table(r: int) -> np.ndarray:
    n = 1 << r
    out = np.zeros(n, dtype=np.int64)
    for i in range(n):
        v = 0
        x = i
        for _ in range(r):
            v = (v << 1) | (x & 1)
            x >>= 1
        out[i] = v
    return out


def _coaction_matrix(N: int, words: np.ndarray, data: _PrimeData, fbasis) -> np.ndarray:
    """Non-top f-coordinates Δ'(G(w;1)) of the given weight-N words (rows), mod p."""
    p = data.p
    fidx = fbasis[N]
    out = np.zeros((len(words), len(fidx)), dtype=np.int64)
    for r in range(3, N - 1, 2):
        vals_r = data.word_values(r)
        basis_r = data.basis_of(r)
        try:
            zcol = basis_r.index(((r,),))
        except ValueError:  # pragma: no cover - ζ(r) is always a generator
            continue
        lcoef = vals_r[:, zcol]
        lcoef_rev = lcoef[_bit_reverse_table(r)]
        right = data.f_images(N - r, fbasis)
        embed = np.array([fidx[(k2, (r,) + letters)] for (k2, letters) in fbasis[N - r]], dtype=np.int64)
        mask_r = (1 << r) - 1
        for pos in range(0, N - r + 1):
            sl = (words >> pos) & mask_r
            lo = (words >> (pos - 1)) & 1 if pos >= 1 else np.zeros_like(words)
            hi = (words >> (pos + r)) & 1 if pos + r <= N - 1 else np.ones_like(words)
            coef = np.where((lo == 0) & (hi == 1), lcoef[sl], 0)
            coef = np.where((lo == 1) & (hi == 0), (-lcoef_rev[sl]) % p, coef)
            nz = np.nonzero(coef)[0]
            if len(nz) == 0:
                continue
            rest = ((words[nz] >> (pos + r)) << pos) | (words[nz] & ((1 << pos) - 1))
            contrib = (coef[nz, None] * right[rest]) % p
            out[np.ix_(nz, embed)] = (out[np.ix_(nz, embed)] + contrib) % p
    return out


def _prime_delta(p: int, N: int, store, word_ints: np.ndarray, nontop_cols: np.ndarray) -> np.ndarray:
    """Non-top coaction coordinates of the given weight-N words modulo ``p``
    (one task of a distributed build; ``store`` needs the weights ≤ N - 2)."""
    fbasis = {k: {key: i for i, key in enumerate(f_monomials(k))} for k in range(0, N + 1)}
    return _coaction_matrix(N, word_ints, _PrimeData(p, store), fbasis)[:, nontop_cols]


def _deltas(N: int, store, word_ints, nontop_cols, say, client) -> Iterator[Tuple[int, np.ndarray]]:
    """``(p, delta)`` for the primes in order, computed when asked for
    (serial) or three primes at a time ahead on the cluster."""
    if client is None:
        for i, p in enumerate(SMALL_PRIMES):
            say(f"weight {N}: coaction modulo prime {i + 1}")
            yield p, _prime_delta(p, N, store, word_ints, nontop_cols)
        return
    shared = client.scatter(store.snapshot(N - 2), broadcast=True)
    pending = []

    def submit(p):
        pending.append(client.submit(_prime_delta, p, N, shared, word_ints, nontop_cols, pure=False))

    try:
        for p in SMALL_PRIMES[:3]:  # the fewest primes a weight ever needs
            submit(p)
        for i, p in enumerate(SMALL_PRIMES):
            if i == len(pending):
                submit(p)
            say(f"weight {N}: coaction modulo prime {i + 1} (cluster)")
            yield p, pending[i].result()
    finally:
        client.cancel(pending)


def _numeric_setup(index_lists, basis_monos, top_mono, digits, small_bits):
    """High-precision values of the basis monomials, the top element and the
    given words (call inside ``mpmath.workdps(digits + 20)``)."""
    import mpmath

    from .numeric import zeta_numeric, zeta_numeric_many

    gens_needed = sorted({g for m in list(basis_monos) + [top_mono] for g in m})
    gval = {g: zeta_numeric(g, digits + 20) for g in gens_needed}
    bval = []
    for m in basis_monos:
        v = mpmath.mpf(1)
        for g in m:
            v *= gval[g]
        bval.append(v)
    topval = mpmath.mpf(1)
    for g in top_mono:
        topval *= gval[g]
    word_vals = zeta_numeric_many(index_lists, digits + 20, small_bits=small_bits)
    return bval, topval, word_vals


def _fixed(x, bits: int) -> int:
    """``floor(x · 2^bits)`` of an mpmath number, as an integer."""
    man, exp = x.man_exp
    shift = exp + bits
    return man << shift if shift >= 0 else man >> -shift


def _top_rows(index_lists, coords, word_vals, bval, topval, digits):
    """The rational multiple of the top element in every given word (see module
    doc), from the exact coordinates ``coords`` (per word ``[(basis index,
    numerator, denominator), ...]``, denominators positive).  Returns the top
    coefficients as ``(numerator, denominator)`` of ``G(w; 1)``.  Call inside
    ``mpmath.workdps(digits + 20)``.

    The sums run on fixed-point integers (the values times 2^bits, ``bits``
    the working precision): each term costs one integer product and one
    floor division instead of several mpmath operations (five times faster
    at weight 15, measured).  Every floor errs by less than 2^-bits, far below
    the tolerance 10^-(digits-10) of the check, and the rational is the best
    approximation with denominator below 10^(digits/2 - 5), which the check
    then confirms; so the coefficients are the ones the check certifies,
    whichever rounding produced the approximation.
    """
    import mpmath

    N = sum(index_lists[0]) if index_lists else 0
    bits = mpmath.mp.prec
    fb = [_fixed(v, bits) for v in bval]
    ftop = _fixed(topval, bits)
    max_den = 10 ** (digits // 2 - 5)
    tol_inv = 10 ** (digits - 10)
    out = []
    for idx, row in zip(index_lists, coords):
        sign = -1 if len(idx) % 2 else 1  # ζ = (-1)^depth G
        value = _fixed(word_vals[idx], bits)
        approx = 0
        scale = abs(value)
        for a, num, den in row:
            term = (num * fb[a]) // den
            approx += term
            if abs(term) > scale:
                scale = abs(term)
        # G(w) = Σ a_i b_i + c top  and  ζ(idx) = sign·G(w)
        resid = sign * value - approx
        c = Fraction(resid, ftop).limit_denominator(max_den)
        # |resid - c top| ≤ 10^-(digits-10) max(scale, |top|)
        if abs(resid * c.denominator - c.numerator * ftop) * tol_inv > max(scale, abs(ftop)) * c.denominator:
            raise InternalError(
                f"weight {N}: the top coefficient of ζ{idx} is not a small rational at {digits} digits",
            )
        out.append((c.numerator, c.denominator))
    return out


def _top_coefficients(
    index_lists: Sequence[Indices],
    coords: Sequence[Dict[int, Fraction]],
    basis_monos: Sequence[Monomial],
    top_mono: Monomial,
    digits: int,
    small_bits: int,
) -> Dict[Indices, Dict[Monomial, Fraction]]:
    """Reductions of the given words: the exact coordinates ``coords`` plus the
    rational multiple of the top element fixed numerically (see module doc).

    Depends only on its arguments, so the words of a weight can be split into
    chunks (tasks) with identical results: the numerical values use the
    common precision set by ``small_bits`` (see :func:`zeta_numeric_many`).
    """
    import mpmath

    raw = [[(a, q.numerator, q.denominator) for a, q in sorted(row.items())] for row in coords]
    with mpmath.workdps(digits + 20):
        bval, topval, word_vals = _numeric_setup(index_lists, basis_monos, top_mono, digits, small_bits)
        tops = _top_rows(index_lists, raw, word_vals, bval, topval, digits)
    return {idx: _reduction_of(idx, row, top, basis_monos, top_mono) for idx, row, top in zip(index_lists, raw, tops)}


def _reduction_of(idx, row, top, basis_monos, top_mono) -> Dict[Monomial, Fraction]:
    """``{monomial: Fraction}`` of ``ζ(idx)`` from the coordinates of ``G(w; 1)``."""
    sign = -1 if len(idx) % 2 else 1
    red: Dict[Monomial, Fraction] = {}
    for a, num, den in row:
        if num:
            red[basis_monos[a]] = Fraction(sign * num, den)
    if top[0]:
        red[top_mono] = red.get(top_mono, Fraction(0)) + Fraction(sign * top[0], top[1])
    return {m: v for m, v in red.items() if v}


def reduce_weight_motivic(
    weight: int,
    lower_generators: Sequence[Indices],
    store,
    *,
    digits: int = 80,
    progress: Callable[[str], None] | None = None,
    client=None,
    open_writer: Callable[[List[Indices]], object] | None = None,
    chunk_words: int = CHUNK_WORDS,
) -> WeightTable:
    """Reduce all convergent MZVs of ``weight`` via the coaction (see module doc).

    ``store`` must hold the tables (and f-alphabet images) of all lower weights.

    Serially the words are finished in chunks of ``chunk_words``: exact
    coordinates by CRT and rational reconstruction (vectorized Garner digits,
    then one reconstruction per non-zero entry), the top coefficient from the
    word values computed once for all words, and the chunk handed on.  Only
    the residues (int32, one array per prime) are held for all words; a chunk
    whose reconstruction is not confirmed by the last prime asks for one more
    prime.  The reconstructed rationals do not depend on how many primes were
    used (a rational of small height is the unique one), so the table is the
    same as with one global decision.

    ``open_writer(generators)`` (given the final generators of the weight)
    returns a context manager with ``add_raw(rows)`` and ``position``
    (:class:`lowenergy.zeta.table.TableWriter`): the reductions are streamed
    into it and the returned table has ``reductions=None``.  Without it they
    are collected in memory.

    With a ``distributed.Client`` the coaction of each prime is one task (the
    lower tables are sent to every worker once); the rational reconstruction
    and the numerical top coefficients run in chunks of words, one task each
    (the coordinates stay on the workers between the two); the table is
    identical to the serial one.
    """
    import flint
    import mpmath

    from ..cluster import worker_count
    from .numeric import _small_bits

    say = progress or (lambda _m: None)
    N = weight
    t0 = time.perf_counter()
    fbasis = {k: {key: i for i, key in enumerate(f_monomials(k))} for k in range(0, N + 1)}
    top_key = (0, (N,)) if N % 2 else (N // 2, ())
    nontop = [key for key in fbasis[N] if key != top_key]
    nontop_pos = {key: i for i, key in enumerate(nontop)}
    nontop_cols = np.array([fbasis[N][key] for key in nontop], dtype=np.int64)

    index_lists = admissible_indices(N)
    word_ints = np.array(
        [int("".join(map(str, indices_to_word(idx))), 2) for idx in index_lists], dtype=np.int64
    )
    products = monomials_of_weight(lower_generators, N)
    top_mono: Monomial = (((N,),) if N % 2 else tuple([(2,)] * (N // 2)))
    prod_nontop = [m for m in products if m != top_mono]
    prod_f = [monomial_falphabet(mono, store) for mono in prod_nontop]

    candidates = sorted(range(len(index_lists)), key=lambda i: generator_preference(index_lists[i]))

    residues: List[Tuple[int, np.ndarray]] = []  # (p, coordinates mod p: n_words × n_basis, int32)
    choice: Dict[str, List] = {}
    clock = {"coaction": 0.0, "reconstruct": 0.0, "values": 0.0, "top": 0.0}  # seconds per step
    deltas = _deltas(N, store, word_ints, nontop_cols, say, client)

    def next_prime() -> None:
        started = time.perf_counter()
        try:
            p, delta = next(deltas)
        except StopIteration:
            raise InternalError(
                f"rational reconstruction failed at weight {N} with all {len(SMALL_PRIMES)} primes; need more primes"
            ) from None
        # rows of the basis other than the top: products ...
        prod_rows = np.zeros((len(prod_nontop), len(nontop)), dtype=np.int64)
        for a, fimage in enumerate(prod_f):
            for key, c in fimage.items():
                if key != top_key:
                    prod_rows[a, nontop_pos[key]] = to_mod(c, p)
        # ... and new generators, greedily by preference (same prime-independent choice)
        if "rows" not in choice:
            mat = [list(map(int, row)) for row in prod_rows]
            rank = flint.nmod_mat(mat, p).rank() if mat else 0
            if rank != len(prod_nontop):
                raise InternalError(f"products are dependent at weight {N}: lower tables inconsistent")
            chosen: List[int] = []
            need = len(nontop) - rank
            for i in candidates:
                if len(chosen) == need:
                    break
                trial = mat + [list(map(int, delta[i]))]
                r2 = flint.nmod_mat(trial, p).rank()
                if r2 > rank:
                    mat, rank = trial, r2
                    chosen.append(i)
            if rank != len(nontop):
                raise InternalError(f"the coaction images do not span weight {N}; tables inconsistent")
            choice["rows"] = chosen
        gen_rows = choice["rows"]
        # basis element ζ(g) = (-1)^depth G(w_g): flip the rows of odd depth
        gen_signs = np.array([(-1) ** len(index_lists[i]) for i in gen_rows], dtype=np.int64)
        gen_part = (delta[gen_rows] * gen_signs[:, None]) % p
        basis_rows = np.vstack([prod_rows, gen_part]) if len(prod_nontop) else gen_part
        if len(nontop):
            binv = flint.nmod_mat([list(map(int, row)) for row in basis_rows], p).inv()
            binv_np = np.array([[int(binv[i, j]) for j in range(binv.ncols())] for i in range(binv.nrows())], dtype=np.int64)
        else:  # weights 3 and 4: every word is a rational multiple of the top element
            binv_np = np.zeros((0, 0), dtype=np.int64)
        coords = np.zeros((len(index_lists), binv_np.shape[1]), dtype=np.int64)
        for start in range(0, delta.shape[1], 32):
            coords = (coords + delta[:, start : start + 32] @ binv_np[start : start + 32]) % p
        del delta
        residues.append((p, coords.astype(np.int32)))  # entries < 2^26
        clock["coaction"] += time.perf_counter() - started

    def final_generators() -> List[Indices]:
        gens = [index_lists[i] for i in choice["rows"]]
        if N % 2 and (N,) not in gens:
            gens = [(N,)] + gens
        return sorted(gens, key=generator_preference)

    small = max(_small_bits(idx) for idx in index_lists)  # one precision for all words
    try:
        if client is not None:
            # cluster: reconstruction and numerics as tasks on chunks of words;
            # one chunk per worker: chunks recompute the partial sums they share
            # (measured at weight 15: 2 chunks cost 1.4x the numerics of one, 4 chunks 1.9x)
            n_chunks = min(len(index_lists), worker_count(client))
            bounds = [len(index_lists) * i // n_chunks for i in range(n_chunks + 1)]
            coords_q = None
            while coords_q is None:
                next_prime()
                if len(residues) >= 3:
                    coords_q = _reconstruct([(p, r, None) for p, r in residues], bounds, client)
            t1 = time.perf_counter()
            say(f"weight {N}: fixing {len(index_lists)} top coefficients numerically")
            basis_monos: List[Monomial] = list(prod_nontop) + [(index_lists[i],) for i in choice["rows"]]
            futures = [
                client.submit(_top_coefficients_packed, index_lists[a:b], part, basis_monos, top_mono, digits, small,
                              pure=False)
                for (a, b), part in zip(zip(bounds, bounds[1:]), coords_q)
            ]
            try:
                packed = client.gather(futures)
            finally:
                client.cancel(futures + list(coords_q))
            reductions = {
                idx: {mono: Fraction(n, d) for mono, n, d in terms} for part in packed for idx, terms in part
            }
            del packed
            if open_writer is not None:
                with open_writer(final_generators()) as writer:
                    writer.add(reductions)
                reductions = None
        else:
            for _ in range(3):  # the fewest primes a weight ever needs
                next_prime()
            t1 = time.perf_counter()
            basis_monos = list(prod_nontop) + [(index_lists[i],) for i in choice["rows"]]
            say(f"weight {N}: numerical values of {len(index_lists)} words")
            with mpmath.workdps(digits + 20):
                started = time.perf_counter()
                bval, topval, word_vals = _numeric_setup(index_lists, basis_monos, top_mono, digits, small)
                clock["values"] += time.perf_counter() - started
                reductions = {} if open_writer is None else None
                writer_cm = open_writer(final_generators()) if open_writer is not None else None
                writer = writer_cm.__enter__() if writer_cm is not None else None
                try:
                    if writer is not None:
                        signed_pos = [writer.position[m] for m in basis_monos]
                        top_pos = writer.position[top_mono]
                    for start in range(0, len(index_lists), chunk_words):
                        stop = min(start + chunk_words, len(index_lists))
                        say(f"weight {N}: words {start + 1}-{stop} of {len(index_lists)} ({len(residues)} primes)")
                        while True:
                            started = time.perf_counter()
                            rows = _reconstruct_rows([(p, r[start:stop]) for p, r in residues])
                            clock["reconstruct"] += time.perf_counter() - started
                            if rows is not None:
                                break
                            next_prime()
                        chunk = index_lists[start:stop]
                        started = time.perf_counter()
                        tops = _top_rows(chunk, rows, word_vals, bval, topval, digits)
                        clock["top"] += time.perf_counter() - started
                        if writer is None:
                            for idx, row, top in zip(chunk, rows, tops):
                                reductions[idx] = _reduction_of(idx, row, top, basis_monos, top_mono)
                        else:
                            out = []
                            for idx, row, top in zip(chunk, rows, tops):
                                sign = -1 if len(idx) % 2 else 1
                                terms = [(signed_pos[a], sign * num, den) for a, num, den in row]
                                if top[0]:  # the top monomial is never among basis_monos
                                    terms.append((top_pos, sign * top[0], top[1]))
                                terms.sort()
                                out.append((idx, terms))
                            writer.add_raw(out)
                        del rows, tops
                except BaseException:
                    if writer_cm is not None:
                        import sys

                        writer_cm.__exit__(*sys.exc_info())
                    raise
                if writer_cm is not None:
                    writer_cm.__exit__(None, None, None)
    finally:
        deltas.close()  # cancels primes computed ahead on a cluster
    t2 = time.perf_counter()
    new_gens = final_generators()
    # generators themselves must map to themselves
    if reductions is not None:
        for g in new_gens:
            if g != (N,) and reductions[g] != {(g,): Fraction(1)}:
                raise InternalError(f"weight {N}: generator ζ{g} does not reduce to itself")
    dimension = len(basis_monos) + 1
    return WeightTable(
        weight=N,
        generators=new_gens,
        reductions=reductions,
        dimension=dimension,
        stats={
            "method": "motivic",
            "coaction_s": t1 - t0,
            "numerics_s": t2 - t1,
            "primes": len(residues),
            "digits": digits,
            "words": len(index_lists),
            # serial builds: wall seconds of each step (the coaction of all primes,
            # CRT + reconstruction, the numerical word values, the top coefficients)
            **({f"{k}_total_s": v for k, v in clock.items()} if client is None else {}),
        },
    )


def _reconstruct_rows(per_prime) -> List[List[Tuple[int, int, int]]] | None:
    """Exact coordinates of a chunk of words from their residues modulo the
    primes in ``per_prime`` (``[(p, rows)]``): all but the last reconstruct,
    the last confirms.  Per word ``[(column, numerator, denominator), ...]``
    (columns ascending, zeros left out, denominators positive); None if any
    entry fails (more primes needed).

    Garner's mixed-radix digits are computed with numpy for all non-zero
    entries at once (every product of two residues stays below 2^52); only
    the big-integer assembly and the half-extended Euclid of
    :func:`lowenergy.linalg.rational_reconstruct` run per entry.
    """
    primes = [p for p, _ in per_prime[:-1]]
    p_check, check = per_prime[-1]
    res = [np.asarray(r, dtype=np.int64) for _, r in per_prime[:-1]]
    check = np.asarray(check, dtype=np.int64)
    n_words = check.shape[0]
    nz = np.zeros(check.shape, dtype=bool)
    for r in res:
        nz |= r != 0
    if np.any(check[~nz]):  # reconstructed 0, but not 0 modulo the check prime
        return None
    wi, col = np.nonzero(nz)
    vals = [r[wi, col] for r in res]
    del res, nz
    # mixed radix: x = d0 + d1 P1 + d2 P2 + ..., P_j = p_0 ... p_{j-1}
    radix = [1]
    for p in primes[:-1]:
        radix.append(radix[-1] * p)
    modulus = radix[-1] * primes[-1]
    digits = [vals[0]]
    for i in range(1, len(primes)):
        p = primes[i]
        acc = np.zeros_like(vals[i])
        for j in range(i):
            acc = (acc + digits[j] * (radix[j] % p)) % p
        digits.append(((vals[i] - acc) % p) * pow(radix[i] % p, -1, p) % p)
    bound = isqrt(modulus // 2)
    digit_lists = [d.tolist() for d in digits]
    checks = check[wi, col].tolist()
    rows: List[List[Tuple[int, int, int]]] = [[] for _ in range(n_words)]
    for k, (w, c) in enumerate(zip(wi.tolist(), col.tolist())):
        x = 0
        for d, r in zip(digit_lists, radix):
            x += d[k] * r
        # rational reconstruction: half-extended Euclid on (modulus, x)
        r0, r1, s0, s1 = modulus, x, 0, 1
        while r1 > bound:
            q = r0 // r1
            r0, r1 = r1, r0 - q * r1
            s0, s1 = s1, s0 - q * s1
        if s1 == 0 or abs(s1) > bound or gcd(r1, abs(s1)) != 1:
            return None
        num, den = (r1, s1) if s1 > 0 else (-r1, -s1)
        if (num - checks[k] * den) % p_check:
            return None
        rows[w].append((c, num, den))
    return rows


def _top_coefficients_packed(index_lists, coords, basis_monos, top_mono, digits, small_bits):
    """:func:`_top_coefficients` of one chunk of words (a task), returned as
    ``[(indices, [(monomial, numerator, denominator), ...]), ...]``: integers
    travel between processes far more cheaply than Fractions."""
    reductions = _top_coefficients(index_lists, coords, basis_monos, top_mono, digits, small_bits)
    return [(idx, [(m, c.numerator, c.denominator) for m, c in red.items()]) for idx, red in reductions.items()]


def _reconstruct_chunk(parts, check):
    """Coordinates of one chunk of words from their residues modulo the primes
    in ``parts`` (``[(p, rows)]``), confirmed by ``check`` (``(p, rows)``), or None."""
    rec = _reconstruct_all([(p, rows, None) for p, rows in parts])
    if rec is None or not _agrees(rec, (check[0], check[1], None)):
        return None
    return rec[0]


def _is_reconstructed(coords) -> bool:
    return coords is not None


def _reconstruct(per_prime, bounds, client):
    """The rational coordinates of all words from all primes but the last,
    confirmed by the last; None if that fails for any word (more primes needed).

    Every word is reconstructed on its own, so on a cluster each chunk of
    words is one task and the coordinates stay on the workers: the result is
    then the list of their futures, one per chunk, for the numerics tasks.
    """
    if client is None:
        rec = _reconstruct_all(per_prime[:-1])
        return rec[0] if rec is not None and _agrees(rec, per_prime[-1]) else None
    p_check, rows_check, _ = per_prime[-1]
    futures = [
        client.submit(_reconstruct_chunk, [(p, rows[a:b]) for p, rows, _ in per_prime[:-1]], (p_check, rows_check[a:b]),
                      pure=False)
        for a, b in zip(bounds, bounds[1:])
    ]
    if all(client.gather([client.submit(_is_reconstructed, f, pure=False) for f in futures])):
        return futures
    client.cancel(futures)
    return None


def _reconstruct_all(per_prime):
    """CRT + rational reconstruction of all coordinates; None if unstable."""
    primes = [p for p, _, _ in per_prime]
    modulus = 1
    for p in primes:
        modulus *= p
    mats = [mat for _, mat, _ in per_prime]
    n_words, n_basis = mats[0].shape
    coords: List[Dict[int, Fraction]] = []
    for wi in range(n_words):
        row: Dict[int, Fraction] = {}
        for a in range(n_basis):
            q = crt_rational([mat[wi, a] for mat in mats], primes, modulus)
            if q is None:
                return None
            if q:
                row[a] = q
        coords.append(row)
    return coords, None


def _agrees(rec, check) -> bool:
    coords, _ = rec
    p, mat, _ = check
    for wi, row in enumerate(coords):
        for a in range(mat.shape[1]):
            q = row.get(a, Fraction(0))
            if int(mat[wi, a]) != to_mod(q, p):
                return False
    return True
