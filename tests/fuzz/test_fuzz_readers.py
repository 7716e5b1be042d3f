"""Fuzzing the four readers: any input ends in a result or a LowEnergyError.

The default run draws a small sample per reader (about 30 s in all); the
slow run draws 10,000 per reader.  Time and memory limits are measured by
bench/fuzz_readers.py (worker processes with a CPU-time limit and a memory
watch), which prints the outcome table; these tests check the kind of
outcome only.
"""

from __future__ import annotations

import pytest
from hypothesis import HealthCheck, given, settings

from lowenergy.errors import LowEnergyError

from .strategies import READERS, STRATEGIES, run_reader

_QUICK = settings(max_examples=25, deadline=None, database=None, suppress_health_check=list(HealthCheck))
_SLOW = settings(max_examples=10_000, deadline=None, database=None, suppress_health_check=list(HealthCheck))


def _check(reader: str, text: str, tmp_path_factory) -> None:
    try:
        run_reader(reader, text, workdir=tmp_path_factory.getbasetemp())
    except LowEnergyError as err:
        assert str(err)  # a message, whatever the input
    # anything else propagates and fails the test, with hypothesis's shrunk input


@pytest.mark.parametrize("reader", READERS)
def test_quick_sample(reader, tmp_path_factory):
    @_QUICK
    @given(STRATEGIES[reader]())
    def inner(text):
        _check(reader, text, tmp_path_factory)

    inner()


@pytest.mark.slow
@pytest.mark.parametrize("reader", READERS)
def test_ten_thousand_per_reader(reader, tmp_path_factory):
    @_SLOW
    @given(STRATEGIES[reader]())
    def inner(text):
        _check(reader, text, tmp_path_factory)

    inner()
