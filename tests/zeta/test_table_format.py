"""The table files of format 3 (SQLite, read word by word) and the streamed build.

* The streamed coaction build (reductions written to the file chunk by
  chunk) and the double-shuffle build (a whole weight in memory, then
  written) give the same file contents, row by row, through weight 12; the
  two routes share no algebra (lowenergy/zeta/reduction.py vs motivic.py).
* The reductions read back from the files equal those of format 2, the
  single-JSON layout of the previous release, weight by weight: the files in
  ``tests/zeta/data/format2`` were written by that release's code (weights
  2-10; not by the code under test), and the weights 2-16 were compared the
  same way by hand against a format-2 cache (see the branch's note).
* Old or foreign files are never taken for tables: a format-2 file in the
  new directory is not read, a SQLite file of another format or weight and a
  damaged file give a TableError with the rebuild command, a file whose meta
  file is missing counts as not built.
"""

from __future__ import annotations

import json
import pickle
import shutil
import sqlite3
from fractions import Fraction
from pathlib import Path

import pytest

from lowenergy.errors import TableError
from lowenergy.linalg import crt_rational, to_mod
from lowenergy.zeta import motivic
from lowenergy.zeta.table import FORMAT_VERSION, StoredReductions, TableStore, build_tables

FORMAT2 = Path(__file__).parent / "data" / "format2"


def _rows(path: Path):
    with sqlite3.connect(path) as conn:
        return (
            conn.execute("SELECT key, value FROM info ORDER BY key").fetchall(),
            conn.execute("SELECT pos, monomial FROM basis ORDER BY pos").fetchall(),
            conn.execute("SELECT word, terms FROM reductions ORDER BY word").fetchall(),
        )


def _meta(store: TableStore, w: int) -> dict:
    meta = json.loads(store.meta_path(w).read_text())
    meta.pop("stats")
    return meta


@pytest.fixture(scope="module")
def two_routes(tmp_path_factory):
    root = tmp_path_factory.mktemp("routes")
    shuffle = build_tables(12, TableStore(root / "a" / f"mzv-v{FORMAT_VERSION}"), method="double-shuffle")
    streamed = build_tables(12, TableStore(root / "b" / f"mzv-v{FORMAT_VERSION}"), method="motivic")
    return shuffle, streamed


@pytest.mark.parametrize("w", range(2, 13))
def test_streamed_and_in_memory_builds_write_the_same_files(two_routes, w):
    shuffle, streamed = two_routes
    assert w == 2 or streamed.stats(w)["method"] == "motivic"
    assert "method" not in shuffle.stats(w)
    assert _rows(shuffle.path(w)) == _rows(streamed.path(w))
    assert _meta(shuffle, w) == _meta(streamed, w)


@pytest.mark.parametrize("w", range(2, 11))
def test_files_read_back_equal_format_2_of_the_previous_release(two_routes, w):
    old = json.loads((FORMAT2 / f"weight-{w}.json").read_text())
    meta = json.loads((FORMAT2 / f"weight-{w}.meta.json").read_text())
    assert old["format"] == 2 and old["weight"] == w
    basis = [tuple(tuple(int(n) for n in g.split(",")) for g in mono) for mono in old["basis"]]
    store = TableStore(two_routes[1].directory, auto_build=False)  # fresh: reads the files
    reds = store._reductions.get(w)
    assert reds is None
    assert store.dimension(w) == meta["dimension"] == old["dimension"]
    assert store.generators(w) == [tuple(int(n) for n in g.split(",")) for g in old["generators"]]
    assert len(old["reductions"]) == 2 ** (w - 2)
    for key, terms in old["reductions"].items():
        idx = tuple(int(n) for n in key.split(","))
        assert store.reduction(idx) == {basis[p]: Fraction(n, d) for p, n, d in terms}, idx
    store._need(w)
    assert isinstance(store._reductions[w], StoredReductions)
    assert len(store._reductions[w]) == len(old["reductions"])


def test_format_2_cache_is_converted_to_the_same_files(two_routes, tmp_path):
    old_dir = tmp_path / "mzv-v2"
    shutil.copytree(FORMAT2, old_dir)
    store = TableStore(tmp_path / f"mzv-v{FORMAT_VERSION}")
    seen = []
    build_tables(11, store, progress=lambda w, m: seen.append((w, m)))
    built = two_routes[0]
    for w in range(2, 12):
        assert _rows(store.path(w)) == _rows(built.path(w)), w
        assert _meta(store, w) == _meta(built, w), w
        assert store.stats(w).get("converted_from_format") == (2 if w <= 10 else None)
    assert (11, "done") in seen


def test_inconsistent_format_2_file_is_rebuilt_not_converted(two_routes, tmp_path):
    old_dir = tmp_path / "mzv-v2"
    shutil.copytree(FORMAT2, old_dir)
    data = json.loads((old_dir / "weight-8.json").read_text())
    data["generators"] = ["5,3"]  # not the generator these tables choose
    (old_dir / "weight-8.json").write_text(json.dumps(data))
    store = build_tables(9, TableStore(tmp_path / f"mzv-v{FORMAT_VERSION}"))
    assert "converted_from_format" not in store.stats(8)
    assert store.stats(9).get("converted_from_format") == 2
    assert _rows(store.path(8)) == _rows(two_routes[0].path(8))


def test_format_2_file_in_the_new_directory_is_not_read(tmp_path):
    store = TableStore(tmp_path, auto_build=False)
    shutil.copy(FORMAT2 / "weight-2.json", tmp_path / "weight-2.json")
    shutil.copy(FORMAT2 / "weight-2.meta.json", tmp_path / "weight-2.meta.json")
    assert store.built_weight() == 1
    with pytest.raises(TableError, match="not built yet"):
        store.reduction((1 + 1, 3))


def _store_with(tmp_path, two_routes, w=6):
    src = two_routes[0]
    for v in range(2, w + 1):
        shutil.copy(src.path(v), tmp_path / src.path(v).name)
        shutil.copy(src.meta_path(v), tmp_path / src.meta_path(v).name)
    return TableStore(tmp_path, auto_build=False)


def test_file_of_another_format_or_weight_is_refused(tmp_path, two_routes):
    store = _store_with(tmp_path, two_routes)
    with sqlite3.connect(store.path(6)) as conn:
        conn.execute("UPDATE info SET value = '2' WHERE key = 'format'")
    with pytest.raises(TableError, match="another format or weight") as err:
        store.reduction((3, 3))
    assert "--rebuild" in err.value.hint
    shutil.copy(two_routes[0].path(5), store.path(6))  # a weight-5 file named weight-6
    with pytest.raises(TableError, match="another format or weight"):
        TableStore(tmp_path, auto_build=False).reduction((3, 3))


def test_damaged_file_is_refused(tmp_path, two_routes):
    store = _store_with(tmp_path, two_routes)
    store.path(6).write_bytes(b"not a table" * 100)
    with pytest.raises(TableError, match="cannot be read"):
        store.reduction((3, 3))


def test_file_without_meta_counts_as_not_built(tmp_path, two_routes):
    store = _store_with(tmp_path, two_routes)
    store.meta_path(6).unlink()
    assert store.built_weight() == 5
    with pytest.raises(TableError, match="built up to weight 5"):
        store.reduction((3, 3))


def test_snapshot_holds_the_words_in_memory_and_pickles(tmp_path, two_routes):
    store = _store_with(tmp_path, two_routes, w=8)
    snap = store.snapshot(8)
    shutil.rmtree(tmp_path)  # the snapshot needs no files
    copy = pickle.loads(pickle.dumps(snap))
    for w in range(2, 9):
        assert dict(copy._reductions[w]) == dict(two_routes[0]._reductions[w])


def test_missing_word_is_a_key_error(two_routes):
    reds = StoredReductions(two_routes[0].path(6), 6)
    with pytest.raises(KeyError):
        reds[(1, 5)]  # divergent: not in any table
    assert len(reds) == 16 and (3, 3) in reds


def test_small_chunks_need_more_primes_and_give_the_same_table(two_routes, monkeypatch):
    """Chunks of 7 words: each chunk decides on its own whether its primes
    suffice (a later chunk may ask for more); the table is the same."""
    store = TableStore(two_routes[1].directory, auto_build=False)
    gens = store.all_generators(10)
    table = motivic.reduce_weight_motivic(11, gens, store, chunk_words=7)
    assert table.reductions == dict(two_routes[0]._reductions[11])
    assert table.generators == store.generators(11)


def test_vectorized_reconstruction_agrees_with_crt_rational():
    primes = motivic.SMALL_PRIMES[:5]
    values = [Fraction(0), Fraction(1), Fraction(-7, 3), Fraction(12345678901, 9876543), Fraction(-2, 10**9 + 7),
              Fraction(3**15, 2**17)]
    rows = [[to_mod(q, p) for q in values] for p in primes]
    import numpy as np

    per_prime = [(p, np.array([r], dtype=np.int32)) for p, r in zip(primes, rows)]
    got = motivic._reconstruct_rows(per_prime)
    expect = [crt_rational([r[k] for r in rows[:-1]], primes[:-1]) for k in range(len(values))]
    assert expect == values  # the four-prime modulus is large enough for all of them
    assert got == [[(k, q.numerator, q.denominator) for k, q in enumerate(values) if q]]
    # with two primes (one to reconstruct, one to check) the large ones fail
    assert motivic._reconstruct_rows(per_prime[:2]) is None
