"""The response plot's per-column aggregation keeps what a line chart can show.

Reference: M4 aggregation (Jugel et al., "M4: A Visualization-Oriented Time Series Data
Aggregation", PVLDB 7(10), 2014): a line chart drawn at w pixel columns looks the same from the
first, last, minimum and maximum point of each column. Checked against a brute-force loop over
the columns (an independent computation), exactly.
"""

import numpy as np

from app.docks.response_panel import _m4


def _brute(f, y, lo, hi, columns):
    width = (np.log10(hi) - np.log10(lo)) / columns
    col = np.floor((np.log10(f) - np.log10(lo)) / width).astype(int)
    keep = set(np.flatnonzero(~np.isfinite(y)))
    for c in np.unique(col):
        idx = np.flatnonzero(col == c)
        keep |= {idx[0], idx[-1]}
        fin = idx[np.isfinite(y[idx])]
        if fin.size:
            keep |= {fin[np.argmin(y[fin])], fin[np.argmax(y[fin])]}
    return np.array(sorted(keep))


def test_m4_keeps_first_last_min_max_and_gaps_of_every_column():
    """math: per column the kept indices equal the brute-force first/last/min/max set, gaps
    (non-finite points) are all kept, and far fewer points remain than were computed."""
    rng = np.random.default_rng(7)
    f = np.sort(10 ** rng.uniform(-1, 3, 60000))
    y = np.abs(rng.standard_normal(60000)) * (1 + 1e3 * (rng.uniform(size=60000) < 0.001))
    y[rng.choice(60000, 40, replace=False)] = np.nan
    lo, hi = float(f[0]), float(f[-1])
    keep = _m4(f, y, lo, hi, 500)
    np.testing.assert_array_equal(keep, _brute(f, y, lo, hi, 500))
    assert len(keep) <= 4 * 501 + 40
    for c in range(0, 500, 37):     # the drawn extremes of a column are the computed ones
        width = (np.log10(hi) - np.log10(lo)) / 500
        inside = (np.floor((np.log10(f) - np.log10(lo)) / width) == c) & np.isfinite(y)
        if inside.any():
            kept = np.zeros(len(f), bool)
            kept[keep] = True
            assert np.nanmax(y[inside & kept]) == np.nanmax(y[inside])
            assert np.nanmin(y[inside & kept]) == np.nanmin(y[inside])


def test_m4_leaves_a_sparse_curve_alone():
    """math: with fewer than four points per column there is nothing to drop."""
    f = np.logspace(0, 2, 300)
    assert _m4(f, np.sin(f), 1.0, 100.0, 500) is None
