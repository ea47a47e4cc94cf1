"""The helper process of ``linter.background``: what it sends back is what the function returns (dtype,
shape, memory order, values), a helper that fails or is not allowed leaves the work to the caller, and
``Lazy`` falls back to computing the value itself."""
from __future__ import annotations

import threading

import numpy as np
import pytest

from linter import background
from linter.model import Lazy


@pytest.fixture
def allowed(monkeypatch):
    monkeypatch.setattr(background, "_cpus", lambda: 2)
    with background.allowed(True):
        yield


def arrays():
    rng = np.random.default_rng(3)
    # the first rows of a column-major table, as the node reader makes it (it allots a row per line end
    # and one more): each column contiguous, the table itself neither C- nor F-contiguous
    xyz = np.zeros((3, 1001)).T[:1000]
    xyz[:] = rng.uniform(-1, 1, (1000, 3))
    strided = rng.integers(0, 9, (14, 3)).astype(np.int16)[::2]          # neither: copied as it reads
    return (np.arange(5, 1005, dtype=np.int64), xyz, np.zeros((0, 4), dtype=np.int32), strided)


def test_the_helper_sends_back_what_the_function_returns(allowed):
    pending = background.start(arrays)
    assert pending is not None
    got, want = pending.result(), arrays()
    assert len(got) == len(want)
    for g, w in zip(got, want):
        assert g.dtype == w.dtype and g.shape == w.shape
        np.testing.assert_array_equal(g, w)
    assert got[1].flags.f_contiguous and got[1][:, 0].flags.contiguous     # x, y, z columns still contiguous


def test_a_large_result_comes_back_whole(allowed):
    big = lambda: (np.arange(3_000_000, dtype=np.float64),)       # 24 MB
    (got,) = background.start(big).result()
    np.testing.assert_array_equal(got, big()[0])


def test_a_failing_helper_gives_none_and_lazy_computes_the_value_itself(allowed):
    def fails():
        raise ValueError("not readable")

    assert background.start(fails).result() is None
    calls = []
    lazy = Lazy(lambda: calls.append(1) or (np.ones(3),), early=lambda: background.start(fails))
    assert lazy.start() is True
    np.testing.assert_array_equal(lazy.get()[0], np.ones(3))
    assert calls == [1]


def test_no_helper_unless_allowed_with_two_processors_and_one_thread(monkeypatch):
    monkeypatch.setattr(background, "_cpus", lambda: 2)
    assert background.start(arrays) is None                       # not allowed by the driver
    with background.allowed(True):
        monkeypatch.setattr(background, "_cpus", lambda: 1)
        assert background.start(arrays) is None                   # one processor
        monkeypatch.setattr(background, "_cpus", lambda: 2)
        monkeypatch.setattr(background, "_PLATFORM", "darwin")
        assert background.start(arrays) is None                   # not Linux
        monkeypatch.setattr(background, "_PLATFORM", "linux")
        stop = threading.Event()
        t = threading.Thread(target=stop.wait)
        t.start()
        try:
            assert background.start(arrays) is None               # another thread runs: no fork
        finally:
            stop.set()
            t.join()
        pending = background.start(arrays)
        assert pending is not None
        pending.cancel()                                          # closed and reaped, no result
    assert background.start(arrays) is None                       # allowed only within the block


def test_lazy_without_a_helper_maker_computes_on_get():
    lazy = Lazy(lambda: 42)
    assert lazy.start() is False and lazy.get() == 42 and lazy.loaded
