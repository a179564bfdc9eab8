"""The sample store: swinging-door compression within its tolerance, raw window and blocks,
window queries and min/max per column, checked against brute force with numpy on the same
samples (the definition of each quantity, computed the plain way)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from benchwarden.storage.journal import Journal
from benchwarden.storage.samples import BLOCK_S, RAW_WINDOW_S, SampleStore, swinging_door

T0 = 1_780_000_000.0  # a day boundary is not assumed anywhere


@pytest.mark.parametrize("seed", range(30))
def test_swinging_door_keeps_every_sample_within_the_tolerance(seed):
    # the compression's bound, checked by interpolating the vertices at every sample time (numpy)
    rng = np.random.default_rng(seed)
    n = int(rng.integers(3, 3000))
    t = np.cumsum(rng.uniform(0.05, 5.0, n))
    v = 1.5e7 - rng.uniform(-80, 80) * t + rng.normal(0, rng.uniform(1, 3000), n)
    if seed % 3 == 0:
        v = np.round(v / 1000) * 1000  # a transducer that reports 0.01 bar steps
    if seed % 5 == 0:
        v[n // 2:] += 5e5  # a step: a cylinder change or a valve opened
    tol = float(rng.uniform(1, 2000))
    tt, vv = swinging_door(t.tolist(), v.tolist(), tol)
    assert tt[0] == t[0] and tt[-1] == t[-1] and vv[0] == v[0]
    assert np.all(np.diff(tt) > 0)
    assert np.max(np.abs(np.interp(t, tt, vv) - v)) <= tol * (1 + 1e-9)


def test_a_flat_or_linear_trace_compresses_to_its_ends():
    t = list(range(3600))
    assert len(swinging_door(t, [5e6] * 3600, 1.0)[0]) == 2
    assert len(swinging_door(t, [5e6 - 3.0 * x for x in t], 1.0)[0]) == 2


def _fill(store, sid, n, rng, start=T0, bad_every=0):
    t = start + np.arange(n, dtype=float)
    v = np.round((1.5e7 - 20.0 * (t - start) / 3600 + rng.normal(0, 300, n)) / 1000) * 1000
    rows = [(float(a), None if bad_every and i % bad_every == 0 else float(b))
            for i, (a, b) in enumerate(zip(t, v, strict=True))]
    for k in range(0, n, 3600):
        store.add(sid, rows[k:k + 3600])
    return t, v, rows


def test_compaction_moves_old_samples_into_blocks_and_keeps_them_within_tolerance(tmp_path):
    rng = np.random.default_rng(1)
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j, raw_window_s=RAW_WINDOW_S / 8)
        sid = store.stream("bench", "n2-A", "pressure", 1000.0)
        n = int(store.raw_window_s + 86400)
        t, v, rows = _fill(store, sid, n, rng, bad_every=997)
        now = float(t[-1])
        moved = store.compact(sid, now)
        raw, packed, vertices = store.counts(sid)
        good = sum(1 for r in rows if r[1] is not None)
        limit = math.floor((now - store.raw_window_s) / BLOCK_S) * BLOCK_S
        assert moved == sum(1 for r in rows if r[0] < limit)       # every old sample, good or bad, moved
        assert raw == sum(1 for r in rows if r[0] >= limit)         # the raw window untouched
        assert packed == sum(1 for r in rows if r[0] < limit and r[1] is not None)
        assert vertices < packed / 20                               # and it did compress
        assert raw + packed <= len(rows) and raw + packed >= good
        # every good sample, old or recent, within the tolerance of what the store gives back
        pt, pv = store.points(sid, float(t[0]), now)
        ok = np.array([r[1] is not None for r in rows])
        assert np.max(np.abs(np.interp(t[ok], pt, pv) - v[ok])) <= 1000.0 * (1 + 1e-9)
        assert store.latest(sid) == (float(t[-1]), float(v[-1]))
        assert store.compact(sid, now) == 0  # nothing more to move


def test_late_samples_for_a_compressed_hour_join_it(tmp_path):
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j, raw_window_s=3600.0)
        sid = store.stream("b", "s", "pressure", 10.0)
        store.add(sid, [(T0 + i, 1e6) for i in range(0, 1800)])
        store.compact(sid, T0 + 3 * 3600)
        store.add(sid, [(T0 + i, 1e6 + 100) for i in range(1800, 3000)])  # a log that arrives late
        store.compact(sid, T0 + 3 * 3600)
        raw, packed, _ = store.counts(sid)
        assert raw == 0 and packed == 3000
        pt, pv = store.points(sid, T0, T0 + 3600)
        assert pv[0] == pytest.approx(1e6, abs=10) and pv[-1] == pytest.approx(1e6 + 100, abs=10)


@pytest.mark.parametrize("span, cols", [(3600.0, 60), (86400.0, 200), (1.9 * 86400.0, 20), (1.5 * 86400.0, 7)])
def test_min_max_per_column_agrees_with_brute_force(tmp_path, span, cols):
    rng = np.random.default_rng(3)
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j, raw_window_s=6 * 3600.0)
        sid = store.stream("b", "s", "pressure", 1000.0)
        t, v, _ = _fill(store, sid, 2 * 86400, rng)
        end = float(t[-1]) + 1
        store.compact(sid, end)
        start = end - span
        c = store.columns(sid, start, end, cols)
        edges = start + (end - start) / cols * np.arange(cols + 1)
        idx = np.searchsorted(edges, t, side="right") - 1
        sel = (t >= start) & (t < end)
        for k in range(cols):
            inside = v[sel & (idx == k)]
            if inside.size == 0:
                continue
            # a column of whole blocks takes their summaries (a block on a column edge counts where
            # its middle lies), else the compressed trace: within one block's swing or the tolerance
            slack = 1000.0 if (end - start) / cols < BLOCK_S else 2100.0
            assert c.vmin[k] <= inside.max() and c.vmax[k] >= inside.min()
            assert abs(c.vmin[k] - inside.min()) <= slack and abs(c.vmax[k] - inside.max()) <= slack


def test_streams_are_separate_and_unknown_ones_are_none(tmp_path):
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j)
        a = store.stream("b", "s1", "pressure", 10.0)
        b = store.stream("b", "s1", "temperature", 0.05)
        assert a != b and store.stream("b", "s2", "pressure") is None
        store.add(a, [(T0, 2e6)])
        assert store.latest(b) is None and store.latest(a) == (T0, 2e6)
    with Journal(tmp_path / "j.sqlite3") as j:  # and they are there after reopening
        assert SampleStore(j).stream("b", "s1", "pressure") == a


def test_a_log_read_again_after_compaction_adds_nothing_twice(tmp_path):
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j, raw_window_s=3600.0)
        sid = store.stream("b", "s", "pressure", 10.0)
        rows = [(T0 + i, 1e6 - 0.5 * i) for i in range(0, 7200)]
        store.add(sid, rows)
        store.compact(sid, T0 + 4 * 3600)
        before = store.counts(sid)
        store.add(sid, rows)  # a restarted watcher reads the whole log again
        store.compact(sid, T0 + 4 * 3600)
        assert store.counts(sid) == before
        pt, _ = store.points(sid, T0, T0 + 7200)
        assert np.all(np.diff(pt) > 0)  # no time twice
