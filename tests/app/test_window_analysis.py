"""The window's analysis of a large model: the lowest modes, every one a source can reach.

Above ``FULL_SPECTRUM_DOF`` DOFs the window solves for the lowest modes only (the command line and
the solver API still give every mode). Checked against the closed form of a uniform chain fixed
at one end and free at the other (REFERENCES.md CH-FR: w_j = 2 w0 sin((2j - 1) pi / (2(2n + 1))),
Noschese, Pasquini and Reichel, Numer. Linear Algebra Appl. 20 (2013) 302, and any vibration
text).
"""

from __future__ import annotations

import math

import numpy as np

from app.results import offload
from solver.model import Anchor, Excitation, Mass, Model, Spring

M, K = 2.0, 800.0


def _chain(n, excitations=()):
    masses = tuple(Mass(f"m{i}", 0.1 * (i + 1), 0.0, M) for i in range(n))
    springs = (Spring("s0", "g", "m0", K),) + tuple(
        Spring(f"s{i}", f"m{i - 1}", f"m{i}", K) for i in range(1, n))
    return Model(kind="line", masses=masses, anchors=(Anchor("g", 0.0, 0.0),), springs=springs,
                 excitations=tuple(excitations))


def _closed_form_hz(n):
    w0 = math.sqrt(K / M)
    j = np.arange(1, n + 1)
    return 2 * w0 * np.sin((2 * j - 1) * np.pi / (2 * (2 * n + 1))) / (2 * np.pi)


def test_small_model_gets_every_mode():
    """A model at the limit keeps the full spectrum (math: CH-FR, rtol 1e-9)."""
    n = offload.FULL_SPECTRUM_DOF
    a = offload.analyse(_chain(n))
    assert a.n_modes == n
    np.testing.assert_allclose(a.modal.frequencies_hz, _closed_form_hz(n), rtol=1e-9)
    assert not any("lowest" in w for w in a.warnings)


def test_large_model_gets_the_lowest_modes_and_says_so():
    """A 600-mass chain without sources: the lowest LOWEST_MODES modes, each the closed form
    (CH-FR, rtol 1e-8), and a note saying how many of how many."""
    n = 600
    a = offload.analyse(_chain(n))
    assert a.n_modes == offload.LOWEST_MODES
    np.testing.assert_allclose(a.modal.frequencies_hz, _closed_form_hz(n)[: a.n_modes],
                               rtol=1e-8)
    note = [w for w in a.warnings if "lowest" in w]
    assert note and f"{offload.LOWEST_MODES} of 600" in note[0]


def test_every_mode_below_the_highest_source_is_computed():
    """With a band source reaching well up the spectrum, the window has every mode below
    COVER_FACTOR x its widened top edge: the count of closed-form frequencies below it (CH-FR),
    so the margin check sees each mode that can come near the source."""
    n = 600
    band = Excitation("e1", "band", f_min_hz=1.0, f_max_hz=1.2)
    model = _chain(n, [band])
    a = offload.analyse(model)
    cover = offload.COVER_FACTOR * 1.2 * (1 + model.margin_percent / 100)
    exact = _closed_form_hz(n)
    need = int(np.sum(exact < cover))
    assert need > offload.LOWEST_MODES          # the source asks for more than the minimum
    assert a.n_modes >= need
    np.testing.assert_allclose(a.modal.frequencies_hz, exact[: a.n_modes], rtol=1e-8)
    assert f"below {cover:.4g} Hz" in " ".join(a.warnings)
