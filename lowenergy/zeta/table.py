"""Cached MZV reduction tables, one JSON file per weight.

Tables live in ``<cache>/mzv-v<FORMAT>/weight-<N>.json`` where ``<cache>``
is ``$LOWENERGY_CACHE_DIR`` if set, else the user's cache directory
(``platformdirs.user_cache_dir("lowenergy")``).  JSON, never pickle: a
cache file is data, not code.

**Building on demand.**  A store builds the weights it is asked for on first
use (up to :data:`MAX_WEIGHT`), so library calls and commands never stop
with "build the tables first".  ``lowenergy tables build --weight N`` (or
:func:`build_tables`) builds ahead of time.  Single zetas never need a table:
``ζ(2n)`` is a rational multiple of ``ζ(2)^n`` (Euler, via Bernoulli
numbers) and an odd ``ζ(n)`` is a generator.  Builds are reported

* to the logger ``"lowenergy.tables"`` at level INFO (silent unless you
  configure logging, e.g. ``logging.basicConfig(level=logging.INFO)``), and
* to the callback installed with :func:`build_progress` (a context manager)
  or :func:`set_build_progress`, called as ``callback(weight, target,
  message)``: ``message`` is ``"start"`` once (``weight`` the first weight to
  build), then progress strings of the build, ``"done"`` after each weight,
  ``"finished"`` at the end.

A store made with ``TableStore(directory, auto_build=False)`` refuses
instead (:class:`~lowenergy.errors.TableError` naming the command to run).
A weight above :data:`MAX_WEIGHT` is refused with the limit.

>>> store = TableStore("/nonexistent/never-created", auto_build=False)
>>> store.reduction((4,))            # ζ(4) = 2/5 ζ(2)^2: no table needed
{((2,), (2,)): Fraction(2, 5)}

File contents (format 2)::

    {"format": 2, "weight": N, "dimension": d_N,
     "generators": ["3,5"],                 # new generators of weight N
     "falphabet": {"3,5": [[f2power, [odd letters...], "p/q"], ...]},
     "basis": [["2","2","2","2"], ["3","5"], ["3,5"]],   # monomials of weight N
     "reductions": {"5,3": [[2, -1, 1], [1, 1, 1], [0, -24, 175]], ...},
     "stats": {...}}

A reduction lists ``[position in basis, numerator, denominator]``; generators
are written as comma-joined index lists.  Reductions are turned into
``{monomial: Fraction}`` only when asked for (the files of weight 16-17 hold
millions of coefficients).
"""

from __future__ import annotations

import json
import logging
import os
import tempfile
import time
from collections.abc import Mapping
from contextlib import contextmanager
from fractions import Fraction
from pathlib import Path
from typing import Callable, Dict, Iterator, List, Optional, Tuple

from ..errors import InternalError, TableError
from ..fileio import write_atomic
from ..words import Indices
from .reduction import Monomial, WeightTable, reduce_weight

__all__ = [
    "FORMAT_VERSION",
    "cache_dir",
    "TableStore",
    "default_store",
    "build_tables",
    "BUILD_COMMAND",
    "MAX_WEIGHT",
    "build_progress",
    "set_build_progress",
    "single_zeta",
]

FORMAT_VERSION = 2
DOUBLE_SHUFFLE_MAX = 12
BUILD_COMMAND = "lowenergy tables build --weight {weight}"
#: Largest weight lowenergy builds tables for (on demand or with
#: ``tables build``).  Weight 17 takes about 1.5 min and 1.3 GB from scratch
#: on the development machine; each weight costs roughly twice the previous.
MAX_WEIGHT = 18

log = logging.getLogger("lowenergy.tables")

#: ``callback(weight, target, message)`` told about builds made on demand.
BuildProgress = Callable[[int, int, str], None]
_PROGRESS: List[Optional[BuildProgress]] = [None]


def set_build_progress(callback: Optional[BuildProgress]) -> Optional[BuildProgress]:
    """Install the callback told about on-demand table builds; return the previous one."""
    previous = _PROGRESS[0]
    _PROGRESS[0] = callback
    return previous


@contextmanager
def build_progress(callback: Optional[BuildProgress]) -> Iterator[None]:
    """Report on-demand table builds to ``callback`` inside the ``with`` block.

    >>> seen = []
    >>> with build_progress(lambda w, target, msg: seen.append(msg)):
    ...     pass
    >>> seen
    []
    """
    previous = set_build_progress(callback)
    try:
        yield
    finally:
        set_build_progress(previous)


def _bernoulli(n: int) -> Fraction:
    """Bernoulli number B_n (B_1 = -1/2) from Σ_{k<=n} C(n+1, k) B_k = 0 (A&S 23.1.2 at x=0)."""
    b = [Fraction(1)]
    for m in range(1, n + 1):
        acc = Fraction(0)
        binom = 1  # C(m+1, k)
        for k in range(m):
            acc += binom * b[k]
            binom = binom * (m + 1 - k) // (k + 1)
        b.append(-acc / (m + 1))
    return b[n]


def single_zeta(n: int) -> Dict[tuple, Fraction]:
    """Canonical form of ``ζ(n)``, n ≥ 2, without any table.

    ``ζ(2k) = (-1)^(k+1) B_2k (2π)^(2k) / (2 (2k)!)`` (A&S 23.2.16) with
    ``π^2 = 6 ζ(2)``, so ``ζ(2k) = (-1)^(k+1) B_2k 24^k / (2 (2k)!) · ζ(2)^k``;
    an odd ``ζ(n)`` is itself a generator.

    >>> single_zeta(4)
    {((2,), (2,)): Fraction(2, 5)}
    >>> single_zeta(5)
    {((5,),): Fraction(1, 1)}
    """
    if n < 2:
        raise ValueError(f"single_zeta needs n >= 2, got {n}")
    if n % 2:
        return {((n,),): Fraction(1)}
    k = n // 2
    factorial = 1
    for i in range(2, n + 1):
        factorial *= i
    coeff = (-1) ** (k + 1) * _bernoulli(n) * Fraction(24**k, 2 * factorial)
    return {((2,),) * k: coeff}

FKey = Tuple[int, Tuple[int, ...]]


def cache_dir() -> Path:
    """Directory holding the tables of the current format version."""
    root = os.environ.get("LOWENERGY_CACHE_DIR")
    if not root:
        import platformdirs

        root = platformdirs.user_cache_dir("lowenergy")
    return Path(root) / f"mzv-v{FORMAT_VERSION}"


def _gen_str(g: Indices) -> str:
    return ",".join(str(n) for n in g)


def _gen_parse(s: str) -> Indices:
    return tuple(int(n) for n in s.split(","))


def _frac_str(q: Fraction) -> str:
    return f"{q.numerator}/{q.denominator}" if q.denominator != 1 else str(q.numerator)


class LazyReductions(Mapping):
    """``{index list: {monomial: Fraction}}`` decoded from the file on demand."""

    def __init__(self, raw: Dict[str, list], basis: List[Monomial]) -> None:
        self._raw = raw
        self.basis = basis
        self._done: Dict[Indices, Dict[Monomial, Fraction]] = {}

    def raw_terms(self, indices: Indices) -> list:
        """``[[basis position, numerator, denominator], ...]`` without Fractions."""
        return self._raw[",".join(map(str, indices))]

    def __getitem__(self, indices: Indices) -> Dict[Monomial, Fraction]:
        got = self._done.get(indices)
        if got is None:
            got = {self.basis[pos]: Fraction(num, den) for pos, num, den in self.raw_terms(indices)}
            self._done[indices] = got
        return got

    def __iter__(self):
        return (_gen_parse(k) for k in self._raw)

    def __len__(self) -> int:
        return len(self._raw)


class TableStore:
    """Lazy reader (and writer) of the per-weight tables in one directory.

    Parameters
    ----------
    directory:
        Where the ``weight-N.json`` files are; default :func:`cache_dir`.
    auto_build:
        Build missing weights (up to :data:`MAX_WEIGHT`) when they are first
        needed (default); ``False`` raises :class:`~lowenergy.errors.TableError`
        instead.
    """

    def __init__(self, directory: Path | str | None = None, *, auto_build: bool = True) -> None:
        self.directory = Path(directory) if directory is not None else cache_dir()
        self.auto_build = auto_build
        self._building = False
        self._reductions: Dict[int, Dict[Indices, Dict[Monomial, Fraction]]] = {}
        self._generators: Dict[int, List[Indices]] = {}
        self._falphabet: Dict[Indices, Dict[FKey, Fraction]] = {}
        self._dimension: Dict[int, int] = {}
        self._stats: Dict[int, dict] = {}

    # -- queries -----------------------------------------------------------
    def path(self, weight: int) -> Path:
        return self.directory / f"weight-{weight}.json"

    def meta_path(self, weight: int) -> Path:
        """Small companion file: generators, dimension, f-alphabet, stats."""
        return self.directory / f"weight-{weight}.meta.json"

    def built_weight(self) -> int:
        """Largest W such that all weights 2..W are on disk (1 if none)."""
        w = 1
        while (w + 1) in self._reductions or self.path(w + 1).exists():
            w += 1
        return w

    def _missing(self, weight: int) -> TableError:
        if weight > MAX_WEIGHT:
            return TableError(
                f"MZV tables of weight {weight} are needed; lowenergy builds them up to weight {MAX_WEIGHT} only"
            )
        built = self.built_weight()
        have = f"are built up to weight {built} only" if built >= 2 else "are not built yet"
        return TableError(
            f"MZV tables {have} (in {self.directory}); weight {weight} is needed",
            hint=f"run `{BUILD_COMMAND.format(weight=weight)}`",
        )

    def ensure(self, weight: int) -> None:
        """Make the tables of all weights up to ``weight`` available, building
        the missing ones (see the module docstring); ``TableError`` beyond
        :data:`MAX_WEIGHT` or when ``auto_build`` is off."""
        if weight < 2 or self.built_weight() >= weight:
            return
        if weight > MAX_WEIGHT or not self.auto_build:
            raise self._missing(weight)
        if self._building:  # a build asked for a weight it has not made yet
            raise InternalError(f"the table build needed weight {weight} before building it")
        self.check_writable()  # before announcing (or computing) anything
        target = weight
        hook = _PROGRESS[0]
        first = self.built_weight() + 1
        if hook:
            hook(first, target, "start")
        log.info("building MZV tables of weights %d-%d in %s (once; cached)", first, target, self.directory)

        def say(w: int, message: str) -> None:
            if message == "done":
                log.info("MZV tables: weight %d done (%.2f s)", w, self.stats(w).get("total_s", 0.0))
            if hook and message != "cached":
                hook(w, target, message)

        self._building = True
        try:
            build_tables(weight, self, progress=say)
        finally:
            self._building = False
        if hook:
            hook(target, target, "finished")

    def _need_meta(self, weight: int) -> None:
        if weight in self._generators or weight < 2:
            return
        if not self.path(weight).exists():
            self.ensure(weight)
            if weight in self._generators:
                return
        mp = self.meta_path(weight)
        if not mp.exists():
            self._load(weight)
            return
        data = self._read(mp, weight)
        self._set_meta(weight, data)

    def _need(self, weight: int) -> None:
        if weight in self._reductions:
            return
        if weight < 2:
            return
        if not self.path(weight).exists():
            self.ensure(weight)
            if weight in self._reductions:
                return
        self._load(weight)

    def _read(self, path: Path, weight: int) -> dict:
        try:
            data = json.loads(path.read_text())
        except (OSError, ValueError) as exc:
            raise TableError(
                f"cannot read MZV table {path}: {exc}",
                hint=f"rebuild it with `{BUILD_COMMAND.format(weight=weight)} --rebuild`",
            ) from None
        if data.get("format") != FORMAT_VERSION or data.get("weight") != weight:
            raise TableError(
                f"MZV table {path} has another format or weight",
                hint=f"rebuild it with `{BUILD_COMMAND.format(weight=weight)} --rebuild`",
            )
        return data

    def _set_meta(self, weight: int, data: dict) -> None:
        self._generators[weight] = [_gen_parse(g) for g in data["generators"]]
        self._dimension[weight] = data["dimension"]
        self._stats[weight] = data.get("stats", {})
        for g, terms in data.get("falphabet", {}).items():
            self._falphabet[_gen_parse(g)] = {
                (int(p), tuple(int(a) for a in letters)): Fraction(c) for p, letters, c in terms
            }

    def _load(self, weight: int) -> None:
        data = self._read(self.path(weight), weight)
        basis = [tuple(_gen_parse(g) for g in mono) for mono in data["basis"]]
        self._reductions[weight] = LazyReductions(data["reductions"], basis)
        self._set_meta(weight, data)

    def reduction(self, indices: Indices) -> Dict[Monomial, Fraction]:
        """Canonical form of a convergent ``ζ(indices)``: ``{monomial: coefficient}``."""
        weight = sum(indices)
        if weight == 0:
            return {(): Fraction(1)}
        if len(indices) == 1:
            return single_zeta(weight)
        self._need(weight)
        return self._reductions[weight][tuple(indices)]

    def reduction_raw(self, indices: Indices):
        """``[(monomial, numerator, denominator), ...]`` of a convergent ``ζ(indices)``.

        Avoids building Fractions (used by the modular code paths).
        """
        weight = sum(indices)
        if weight == 0:
            return [((), 1, 1)]
        if len(indices) == 1:
            return [(m, c.numerator, c.denominator) for m, c in single_zeta(weight).items()]
        self._need(weight)
        reds = self._reductions[weight]
        if isinstance(reds, LazyReductions):
            return [(reds.basis[pos], num, den) for pos, num, den in reds.raw_terms(tuple(indices))]
        return [(m, c.numerator, c.denominator) for m, c in reds[tuple(indices)].items()]

    def generators(self, weight: int) -> List[Indices]:
        self._need_meta(weight)
        return list(self._generators.get(weight, []))

    def all_generators(self, max_weight: int) -> List[Indices]:
        out: List[Indices] = []
        for w in range(2, max_weight + 1):
            out.extend(self.generators(w))
        return out

    def dimension(self, weight: int) -> int:
        if weight == 0:
            return 1
        if weight == 1:
            return 0
        self._need_meta(weight)
        return self._dimension[weight]

    def stats(self, weight: int) -> dict:
        self._need_meta(weight)
        return dict(self._stats.get(weight, {}))

    def falphabet_of_generator(self, g: Indices) -> Dict[FKey, Fraction]:
        g = tuple(g)
        if g == (2,):
            return {(1, ()): Fraction(1)}
        if len(g) == 1:  # φ(ζ(2k+1)) = f_(2k+1)
            return {(0, g): Fraction(1)}
        self._need_meta(sum(g))
        return self._falphabet[tuple(g)]

    # -- building ----------------------------------------------------------
    def add(self, table: WeightTable, falphabet: Dict[Indices, Dict[FKey, Fraction]]) -> None:
        """Store a freshly built weight in memory and on disk (atomically)."""
        w = table.weight
        self._reductions[w] = table.reductions
        self._generators[w] = list(table.generators)
        self._dimension[w] = table.dimension
        self._stats[w] = dict(table.stats)
        self._falphabet.update(falphabet)
        basis = sorted({mono for red in table.reductions.values() for mono in red}, key=lambda m: [(sum(g), g) for g in m])
        pos = {mono: i for i, mono in enumerate(basis)}
        data = {
            "format": FORMAT_VERSION,
            "weight": w,
            "dimension": table.dimension,
            "generators": [_gen_str(g) for g in table.generators],
            "falphabet": {
                _gen_str(g): [[p, list(letters), _frac_str(c)] for (p, letters), c in sorted(f.items())]
                for g, f in falphabet.items()
            },
            "basis": [[_gen_str(g) for g in mono] for mono in basis],
            "reductions": {
                _gen_str(idx): [[pos[mono], c.numerator, c.denominator] for mono, c in sorted(red.items())]
                for idx, red in table.reductions.items()
            },
            "stats": table.stats,
        }
        self.directory.mkdir(parents=True, exist_ok=True)
        write_atomic(self.path(w), json.dumps(data, separators=(",", ":")))
        meta = {k: v for k, v in data.items() if k not in ("basis", "reductions")}
        write_atomic(self.meta_path(w), json.dumps(meta, separators=(",", ":")))

    def snapshot(self, max_weight: int) -> "TableStore":
        """A copy holding the tables of weights ≤ ``max_weight`` in memory, which
        never reads or builds files (``auto_build`` off): what is sent to the
        workers of a distributed table build, so they need no shared directory."""
        copy = TableStore(self.directory, auto_build=False)
        for w in range(2, max_weight + 1):
            self._need(w)
            copy._reductions[w] = self._reductions[w]
            copy._generators[w] = list(self._generators[w])
            copy._dimension[w] = self._dimension[w]
            copy._stats[w] = dict(self._stats.get(w, {}))
            for g in self._generators[w]:
                if g in self._falphabet:
                    copy._falphabet[g] = self._falphabet[g]
        return copy

    def forget(self) -> None:
        """Drop everything held in memory (files stay)."""
        self.__init__(self.directory, auto_build=self.auto_build)

    def check_writable(self) -> None:
        """Create the directory if needed and make sure files can be written
        there; :class:`~lowenergy.errors.TableError` (a user error) otherwise."""
        try:
            self.directory.mkdir(parents=True, exist_ok=True)
            fd, tmp = tempfile.mkstemp(dir=self.directory, suffix=".tmp")
            os.close(fd)
            os.unlink(tmp)
        except OSError as exc:
            reason = exc.strerror or str(exc)
            raise TableError(
                f"cannot write MZV tables to the cache directory {self.directory}: {reason}",
                hint="set LOWENERGY_CACHE_DIR to a writable directory",
            ) from None


_STORES: Dict[Path, TableStore] = {}


def default_store() -> TableStore:
    """The store of :func:`cache_dir`, shared within the process."""
    d = cache_dir()
    if d not in _STORES:
        _STORES[d] = TableStore(d)
    return _STORES[d]


def build_tables(
    max_weight: int,
    store: TableStore | None = None,
    *,
    rebuild: bool = False,
    progress: Callable[[int, str], None] | None = None,
    method: str = "auto",
    shuffle_max_weight: int = DOUBLE_SHUFFLE_MAX,
    client=None,
) -> TableStore:
    """Build (or complete) the tables up to ``max_weight``.

    Parameters
    ----------
    max_weight:
        Highest weight to build.
    store:
        Target store (default :func:`default_store`).
    rebuild:
        Recompute weights that are already on disk.
    progress:
        Callback ``progress(weight, message)``.
    method:
        ``"double-shuffle"`` (exact linear algebra on relations),
        ``"motivic"`` (coaction plus one numerically fixed rational per word,
        :mod:`lowenergy.zeta.motivic`; needs the lower weights built) or
        ``"auto"``: double shuffle up to ``shuffle_max_weight``, motivic above.
    client:
        A ``distributed.Client`` (see :func:`lowenergy.cluster.cluster_client`):
        the weights of the motivic route run their per-prime coaction and
        per-word numerics as tasks on it (identical tables); the double-shuffle
        weights (one linear system per weight) stay in this process.
    """
    if method not in ("auto", "double-shuffle", "motivic"):
        raise TableError(f"unknown table method {method!r}", hint="use auto, double-shuffle or motivic")
    from .falphabet import generator_falphabet

    store = store or default_store()
    if max_weight > MAX_WEIGHT:
        raise TableError(f"lowenergy builds MZV tables up to weight {MAX_WEIGHT}, not {max_weight}")
    if rebuild or store.built_weight() < max_weight:
        store.check_writable()  # before any computation
    if rebuild:
        import shutil

        shutil.rmtree(store.directory / "rows", ignore_errors=True)  # cached word-value rows
        for w in range(2, max_weight + 1):
            for path in (store.path(w), store.meta_path(w)):
                if path.exists():
                    path.unlink()
        store.forget()
    gens: List[Indices] = []
    for w in range(2, max_weight + 1):
        if not rebuild and store.path(w).exists():
            gens.extend(store.generators(w))
            if progress:
                progress(w, "cached")
            continue
        t0 = time.perf_counter()
        say = (lambda msg, w=w: progress(w, msg)) if progress else None
        use_motivic = method == "motivic" or (method == "auto" and w > shuffle_max_weight)
        if use_motivic and w >= 3:
            from .motivic import reduce_weight_motivic

            table = reduce_weight_motivic(w, gens, store, progress=say, client=client)
        else:
            table = reduce_weight(w, gens, progress=say)
        # Make the new weight visible before computing the f-alphabet images,
        # which need the reductions of the words of weight w itself.
        store._reductions[w] = table.reductions
        store._generators[w] = list(table.generators)
        store._dimension[w] = table.dimension
        fa = {g: generator_falphabet(g, store) for g in table.generators}
        table.stats["total_s"] = time.perf_counter() - t0
        store.add(table, fa)
        gens.extend(table.generators)
        if progress:
            progress(w, "done")
    return store
