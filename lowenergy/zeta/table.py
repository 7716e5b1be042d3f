"""Cached MZV reduction tables: per weight, one SQLite file read one word at a time.

Tables live in ``<cache>/mzv-v<FORMAT>/weight-<N>.sqlite`` (the reductions)
beside ``weight-<N>.meta.json`` (generators, dimension, f-alphabet images,
build figures), where ``<cache>`` is ``$LOWENERGY_CACHE_DIR`` if set, else the
user's cache directory (``platformdirs.user_cache_dir("lowenergy")``).  Data,
never pickle: a cache file is data, not code.  A weight counts as built when
both files exist; the meta file is written last.

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

**Format 3** (SQLite; the weight-20 file holds 2^18 words and about 27
million coefficients, so nothing reads a whole file into memory)::

    info(key TEXT PRIMARY KEY, value TEXT)      -- "format" = "3", "weight" = "N"
    basis(pos INTEGER PRIMARY KEY, monomial TEXT)   -- "2|2|2", "3|5", "3,5"
    reductions(word INTEGER PRIMARY KEY, terms BLOB)
        -- ζ(5,3): word 00001001 = 9 -> zlib("[[0,-24,175],[1,1,1],[2,-1,1]]")

The basis lists every monomial of weight N in the generators (monomials
joined by ``|``, generators as comma-joined index lists), sorted by the
weights and index lists of their factors.  A word is keyed by its letters
read as a binary number (ζ(n1, ..., nk) is the word 0^(n1-1) 1 ...
0^(nk-1) 1; the key is SQLite's row id, so no separate index is stored), and
its reduction lists ``[position in basis, numerator, denominator]``, sorted
by position, as compact JSON compressed with zlib (a weight-18 file: 300 MB
as text rows, 115 MB as one JSON file; see the README for the sizes now).  A reduction becomes a
``{monomial: Fraction}`` only when asked for, and stays cached per word.
The meta file::

    {"format": 3, "weight": N, "dimension": d_N,
     "generators": ["3,5"],                 # new generators of weight N
     "falphabet": {"3,5": [[f2power, [odd letters...], "p/q"], ...]},
     "stats": {...}}

Format 2 (one JSON file per weight, ``mzv-v2/``) held the same reductions;
it needed the whole file in memory (6 GB for weight 20).  Its directory is
left alone and never read: a new format lives in a new directory, so an old
cache can never be mistaken for a new one.
"""

from __future__ import annotations

import json
import logging
import os
import sqlite3
import tempfile
import zlib
import time
from collections.abc import Mapping
from contextlib import contextmanager
from fractions import Fraction
from pathlib import Path
from typing import Callable, Dict, Iterator, List, Optional, Tuple

from ..errors import InternalError, TableError
from ..fileio import atomic_path, write_atomic
from ..words import Indices
from .reduction import Monomial, WeightTable, monomial_key, monomials_of_weight, reduce_weight

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
    "StoredReductions",
    "TableWriter",
]

FORMAT_VERSION = 3
DOUBLE_SHUFFLE_MAX = 12
BUILD_COMMAND = "lowenergy tables build --weight {weight}"
#: Largest weight lowenergy builds tables for (on demand or with
#: ``tables build``); the same number as :data:`lowenergy.limits.MAX_WEIGHT`.
from ..limits import MAX_WEIGHT  # noqa: E402

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


def _word_key(indices: Indices) -> int:
    """The word of ``ζ(indices)`` read as a binary number (the row id of its reduction)."""
    key = 0
    for n in indices:
        key = (key << n) | 1
    return key


def _word_indices(key: int, weight: int) -> Indices:
    """Inverse of :func:`_word_key` (the word's leading zeros come from the weight).

    >>> _word_key((5, 3)), _word_indices(_word_key((5, 3)), 8)
    (9, (5, 3))
    """
    out = []
    n = 0
    for bit in bin(key)[2:].zfill(weight):
        n += 1
        if bit == "1":
            out.append(n)
            n = 0
    return tuple(out)


def _mono_str(mono: Monomial) -> str:
    return "|".join(_gen_str(g) for g in mono)


def _mono_parse(s: str) -> Monomial:
    return tuple(_gen_parse(g) for g in s.split("|")) if s else ()


def table_basis(generators: List[Indices], weight: int) -> List[Monomial]:
    """Every monomial of ``weight`` in ``generators`` (all weights ≤ ``weight``),
    in the order of a file's ``basis`` table."""
    return sorted(monomials_of_weight(generators, weight), key=monomial_key)


def _table_error(path: Path, weight: int, what: str) -> TableError:
    return TableError(
        f"MZV table {path} {what}",
        hint=f"rebuild it with `{BUILD_COMMAND.format(weight=weight)} --rebuild`",
    )


class StoredReductions(Mapping):
    """``{index list: {monomial: Fraction}}`` of one weight, read word by word.

    Backed by the weight's SQLite file (opened read-only on first use, one
    indexed look-up per word) or, in a :meth:`TableStore.snapshot` sent to
    other processes, by the raw term strings in memory.  Decoded reductions
    are cached per word; :meth:`raw_terms` decodes without Fractions.
    """

    def __init__(self, path: Path | None, weight: int, raw: Dict[int, bytes] | None = None,
                 basis: List[Monomial] | None = None) -> None:
        self.path = path
        self.weight = weight
        self._raw = raw
        self._conn: sqlite3.Connection | None = None
        self._basis = basis
        self._done: Dict[Indices, Dict[Monomial, Fraction]] = {}

    # -- file access ---------------------------------------------------------
    def _db(self) -> sqlite3.Connection:
        if self._conn is None:
            try:
                # read-only and immutable: a table file never changes once
                # written (a rebuild replaces it by a new file)
                conn = sqlite3.connect(f"file:{self.path}?mode=ro&immutable=1", uri=True, check_same_thread=False)
                info = dict(conn.execute("SELECT key, value FROM info").fetchall())
            except sqlite3.Error as exc:
                raise _table_error(self.path, self.weight, f"cannot be read: {exc}") from None
            if info.get("format") != str(FORMAT_VERSION) or info.get("weight") != str(self.weight):
                conn.close()
                raise _table_error(self.path, self.weight, "has another format or weight")
            self._conn = conn
        return self._conn

    def _query(self, sql: str, args: tuple = ()) -> list:
        try:
            return self._db().execute(sql, args).fetchall()
        except sqlite3.Error as exc:
            raise _table_error(self.path, self.weight, f"cannot be read: {exc}") from None

    @property
    def basis(self) -> List[Monomial]:
        if self._basis is None:
            self._basis = [_mono_parse(m) for (m,) in self._query("SELECT monomial FROM basis ORDER BY pos")]
        return self._basis

    def _blob(self, key: int) -> bytes:
        if self._raw is not None:
            blob = self._raw.get(key)
        else:
            got = self._query("SELECT terms FROM reductions WHERE word = ?", (key,))
            blob = got[0][0] if got else None
        if blob is None:
            raise KeyError(key)
        return blob

    # -- reading -------------------------------------------------------------
    def raw_terms(self, indices: Indices) -> list:
        """``[[basis position, numerator, denominator], ...]`` without Fractions."""
        return json.loads(zlib.decompress(self._blob(_word_key(indices))))

    def raw_items(self) -> Iterator[Tuple[Indices, list]]:
        """``(index list, raw terms)`` of every word, in one pass over the file."""
        if self._raw is not None:
            rows = self._raw.items()
        else:
            try:
                rows = self._db().execute("SELECT word, terms FROM reductions")
            except sqlite3.Error as exc:
                raise _table_error(self.path, self.weight, f"cannot be read: {exc}") from None
        for key, blob in rows:
            yield _word_indices(key, self.weight), json.loads(zlib.decompress(blob))

    def __getitem__(self, indices: Indices) -> Dict[Monomial, Fraction]:
        indices = tuple(indices)
        got = self._done.get(indices)
        if got is None:
            basis = self.basis
            got = {basis[pos]: Fraction(num, den) for pos, num, den in self.raw_terms(indices)}
            self._done[indices] = got
        return got

    def __iter__(self):
        w = self.weight
        if self._raw is not None:
            return (_word_indices(k, w) for k in list(self._raw))
        return (_word_indices(k, w) for (k,) in self._query("SELECT word FROM reductions"))

    def __len__(self) -> int:
        if self._raw is not None:
            return len(self._raw)
        return self._query("SELECT count(*) FROM reductions")[0][0]

    def in_memory(self) -> "StoredReductions":
        """The same reductions with the raw term strings held in memory (no file)."""
        if self._raw is not None:
            return self
        raw = dict(self._query("SELECT word, terms FROM reductions"))
        return StoredReductions(None, self.weight, raw=raw, basis=list(self.basis))

    def close(self) -> None:
        if self._conn is not None:
            self._conn.close()
            self._conn = None

    def __getstate__(self) -> dict:  # a connection does not travel between processes
        state = dict(self.__dict__)
        state["_conn"] = None
        return state


class TableWriter:
    """Writes one weight's SQLite file, a chunk of words at a time.

    Use as a context manager; the file appears (atomically, under its final
    name) only when the block ends without an exception.

    Parameters
    ----------
    path, weight:
        The file and its weight.
    basis:
        The monomials of the weight (:func:`table_basis`), in file order.
    """

    def __init__(self, path: Path, weight: int, basis: List[Monomial]) -> None:
        self.path = Path(path)
        self.weight = weight
        self.basis = basis
        self.position = {m: i for i, m in enumerate(basis)}
        self.count = 0
        self._atomic = None
        self._conn: sqlite3.Connection | None = None

    def __enter__(self) -> "TableWriter":
        self.path.parent.mkdir(parents=True, exist_ok=True)
        self._atomic = atomic_path(self.path, durable=True)
        tmp = self._atomic.__enter__()
        # the temporary file is replaced as a whole at the end: no journal needed
        self._conn = sqlite3.connect(tmp)
        self._conn.execute("PRAGMA journal_mode=OFF")
        self._conn.execute("PRAGMA synchronous=OFF")
        self._conn.executescript(
            "CREATE TABLE info(key TEXT PRIMARY KEY, value TEXT);"
            "CREATE TABLE basis(pos INTEGER PRIMARY KEY, monomial TEXT);"
            "CREATE TABLE reductions(word INTEGER PRIMARY KEY, terms BLOB);"
        )
        self._conn.executemany(
            "INSERT INTO info VALUES (?, ?)", [("format", str(FORMAT_VERSION)), ("weight", str(self.weight))]
        )
        self._conn.executemany("INSERT INTO basis VALUES (?, ?)", [(i, _mono_str(m)) for i, m in enumerate(self.basis)])
        return self

    def add_raw(self, rows) -> None:
        """Add ``(index list, [(basis position, numerator, denominator), ...])`` rows
        (terms sorted by position, zero coefficients left out)."""
        batch = [
            (_word_key(idx), zlib.compress(json.dumps([[p, n, d] for p, n, d in terms], separators=(",", ":")).encode()))
            for idx, terms in rows
        ]
        self._conn.executemany("INSERT INTO reductions VALUES (?, ?)", batch)
        self.count += len(batch)

    def add(self, reductions) -> None:
        """Add ``{index list: {monomial: Fraction}}`` (or its items)."""
        items = reductions.items() if isinstance(reductions, Mapping) else reductions
        pos = self.position
        rows = []
        for idx, red in items:
            try:
                terms = sorted((pos[m], c.numerator, c.denominator) for m, c in red.items() if c)
            except KeyError as exc:
                raise InternalError(f"weight {self.weight}: ζ{idx} uses {exc.args[0]}, not a basis monomial") from None
            rows.append((idx, terms))
        self.add_raw(rows)

    def __exit__(self, kind, value, tb) -> bool:
        conn, self._conn = self._conn, None
        try:
            if kind is None:
                conn.commit()
            conn.close()
        except BaseException:
            self._atomic.__exit__(*__import__("sys").exc_info())
            raise
        return bool(self._atomic.__exit__(kind, value, tb))


class TableStore:
    """Lazy reader (and writer) of the per-weight tables in one directory.

    Parameters
    ----------
    directory:
        Where the ``weight-N.sqlite`` and ``weight-N.meta.json`` files are;
        default :func:`cache_dir`.
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
        """The weight's reductions (SQLite, see the module docstring)."""
        return self.directory / f"weight-{weight}.sqlite"

    def meta_path(self, weight: int) -> Path:
        """Small companion file: generators, dimension, f-alphabet, stats."""
        return self.directory / f"weight-{weight}.meta.json"

    def built_weight(self) -> int:
        """Largest W such that all weights 2..W are on disk (1 if none)."""
        w = 1
        while (w + 1) in self._reductions or self._on_disk(w + 1):
            w += 1
        return w

    def _on_disk(self, weight: int) -> bool:
        """Both files of the weight exist (the meta file is written last)."""
        return self.meta_path(weight).exists() and self.path(weight).exists()

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
        if not self._on_disk(weight):
            self.ensure(weight)
            if weight in self._generators:
                return
        self._set_meta(weight, self._read(self.meta_path(weight), weight))

    def _need(self, weight: int) -> None:
        if weight in self._reductions or weight < 2:
            return
        if not self._on_disk(weight):
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
        self._need_meta(weight)
        reds = StoredReductions(self.path(weight), weight)
        reds.basis  # opens the file and checks its format now, not at the first word
        self._reductions[weight] = reds

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
        if isinstance(reds, StoredReductions):
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
        self._generators[w] = list(table.generators)
        self._dimension[w] = table.dimension
        if table.reductions is not None:  # else streamed to the file already (build_tables)
            basis = table_basis(self.all_generators(w), w)
            with TableWriter(self.path(w), w, basis) as writer:
                writer.add(table.reductions)
            self._reductions[w] = table.reductions
        self.write_meta(table, falphabet)

    def write_meta(self, table: WeightTable, falphabet: Dict[Indices, Dict[FKey, Fraction]]) -> None:
        """Write the weight's meta file: the last step, which marks it as built."""
        w = table.weight
        self._generators[w] = list(table.generators)
        self._dimension[w] = table.dimension
        self._stats[w] = dict(table.stats)
        self._falphabet.update(falphabet)
        meta = {
            "format": FORMAT_VERSION,
            "weight": w,
            "dimension": table.dimension,
            "generators": [_gen_str(g) for g in table.generators],
            "falphabet": {
                _gen_str(g): [[p, list(letters), _frac_str(c)] for (p, letters), c in sorted(f.items())]
                for g, f in falphabet.items()
            },
            "stats": table.stats,
        }
        self.directory.mkdir(parents=True, exist_ok=True)
        write_atomic(self.meta_path(w), json.dumps(meta, separators=(",", ":")))

    def snapshot(self, max_weight: int) -> "TableStore":
        """A copy holding the tables of weights ≤ ``max_weight`` in memory, which
        never reads or builds files (``auto_build`` off): what is sent to the
        workers of a distributed table build, so they need no shared directory."""
        copy = TableStore(self.directory, auto_build=False)
        for w in range(2, max_weight + 1):
            self._need(w)
            reds = self._reductions[w]
            copy._reductions[w] = reds.in_memory() if isinstance(reds, StoredReductions) else reds
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
            for path in (store.meta_path(w), store.path(w)):  # meta first: it marks "built"
                if path.exists():
                    path.unlink()
        store.forget()
    gens: List[Indices] = []
    for w in range(2, max_weight + 1):
        if not rebuild and store._on_disk(w):
            gens.extend(store.generators(w))
            if progress:
                progress(w, "cached")
            continue
        t0 = time.perf_counter()
        say = (lambda msg, w=w: progress(w, msg)) if progress else None
        if not rebuild and _convert_format2(store, w, gens):
            gens.extend(store.generators(w))
            if progress:
                progress(w, "done")
            continue
        use_motivic = method == "motivic" or (method == "auto" and w > shuffle_max_weight)
        if use_motivic and w >= 3:
            from .motivic import reduce_weight_motivic

            def open_writer(new_gens: List[Indices], w: int = w) -> TableWriter:
                return TableWriter(store.path(w), w, table_basis(gens + list(new_gens), w))

            # streamed: the reductions go to the file chunk by chunk
            table = reduce_weight_motivic(w, gens, store, progress=say, client=client, open_writer=open_writer)
        else:
            table = reduce_weight(w, gens, progress=say)
        # Make the new weight visible before computing the f-alphabet images,
        # which need the reductions of the words of weight w itself.
        if table.reductions is None:
            store._reductions[w] = StoredReductions(store.path(w), w)
        else:
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


#: Largest format-2 file converted instead of rebuilt (bytes): reading one
#: needs about six times its size in memory (weight 19: 346 MB on disk).
CONVERT_MAX_BYTES = 400_000_000


def _convert_format2(store: TableStore, weight: int, lower_generators: List[Indices]) -> bool:
    """Write ``weight`` in the current format from a format-2 file of the same
    cache (``../mzv-v2/weight-N.json`` beside the store's directory), if there
    is one and it agrees with the lower weights of this store.

    The reductions are the same numbers in another layout; the basis is
    checked against the generators of the lower weights, so a format-2 file
    that belongs to other tables is not taken (the weight is built instead).
    Returns whether the weight was converted.
    """
    old_dir = store.directory.parent / "mzv-v2"
    path, meta_path = old_dir / f"weight-{weight}.json", old_dir / f"weight-{weight}.meta.json"
    try:
        if not (path.exists() and meta_path.exists()) or path.stat().st_size > CONVERT_MAX_BYTES:
            return False
        data = json.loads(path.read_text())
        meta = json.loads(meta_path.read_text())
    except (OSError, ValueError):
        return False
    if data.get("format") != 2 or data.get("weight") != weight or meta.get("generators") != data.get("generators"):
        return False
    try:
        gens = [_gen_parse(g) for g in data["generators"]]
        old_basis = [tuple(_gen_parse(g) for g in mono) for mono in data["basis"]]
        basis = table_basis(list(lower_generators) + gens, weight)
        pos = {m: i for i, m in enumerate(basis)}
        remap = [pos[m] for m in old_basis]  # KeyError: another generator choice
        falphabet = {
            _gen_parse(g): {(int(p), tuple(int(a) for a in letters)): Fraction(c) for p, letters, c in terms}
            for g, terms in data.get("falphabet", {}).items()
        }
        stats = dict(data.get("stats", {}))
        stats["converted_from_format"] = 2
        table = WeightTable(weight=weight, generators=gens, reductions=None, dimension=data["dimension"], stats=stats)
        with TableWriter(store.path(weight), weight, basis) as writer:
            rows = []
            for key, terms in data["reductions"].items():
                rows.append((_gen_parse(key), sorted((remap[p], n, d) for p, n, d in terms)))
                if len(rows) >= 8192:
                    writer.add_raw(rows)
                    rows = []
            writer.add_raw(rows)
    except (KeyError, TypeError, ValueError, IndexError):
        return False
    del data
    store._reductions[weight] = StoredReductions(store.path(weight), weight)
    store.write_meta(table, falphabet)
    log.info("MZV tables: weight %d converted from format 2 (%s)", weight, path)
    return True
