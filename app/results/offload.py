"""Solves run in a separate process, for the window's background work (no Qt here: the worker
process imports this module and the solver only).

Why a process and not a thread: ``scipy.linalg.eigh`` keeps the interpreter lock for the whole
LAPACK call, so a dense solve of 1000 DOFs in a worker thread froze the window for as long as it
ran (0.7-2 s measured); other Python work in a thread slows the UI thread the same way. A
process has its own interpreter lock.

:func:`run` sends a picklable call to a long-lived worker process (started on first use, with
the ``spawn`` method: no fork of a process that runs Qt threads) and waits for its result; call it
from a worker thread, never the UI thread. Each ``lane`` has its own process, so a sweep of many
solves never holds back the solve of the latest edit. Large results come back as pickle protocol
5 with the arrays out of band, so the receiving side copies them once and rebuilds the objects
without holding the interpreter lock for long.
"""

from __future__ import annotations

import atexit
import math
import pickle
import threading

_lock = threading.Lock()
_pools: dict = {}


def _packed(fn, args):
    result = fn(*args)
    buffers: list = []
    head = pickle.dumps(result, protocol=5, buffer_callback=buffers.append)
    return head, [bytearray(b.raw()) for b in buffers]


def _unpacked(packed):
    head, buffers = packed
    return pickle.loads(head, buffers=buffers)


def _get_pool(lane: str):
    with _lock:
        if lane not in _pools:
            import multiprocessing

            _pools[lane] = multiprocessing.get_context("spawn").Pool(processes=1)
        return _pools[lane]


def run(fn, *args, lane: str = "solve"):
    """``fn(*args)`` in the ``lane``'s worker process; its exceptions are raised here
    (ModelError too). Raises RuntimeError when :func:`shutdown` stops the process meanwhile."""
    import multiprocessing

    pool = _get_pool(lane)
    pending = pool.apply_async(_packed, (fn, args))
    while True:
        try:
            return _unpacked(pending.get(timeout=0.2))
        except multiprocessing.TimeoutError:
            if _pools.get(lane) is not pool:
                raise RuntimeError("the solve process was stopped") from None


def shutdown() -> None:
    """Stop the worker processes at once (solves still running in them are dropped)."""
    with _lock:
        pools = list(_pools.values())
        _pools.clear()
    for pool in pools:
        pool.terminate()
        pool.join()


#: Above this many DOFs the window computes the lowest modes only: every mode of a 1000-DOF
#: model by dense LAPACK took 0.4-0.5 s on one core, the lowest 40 by shift-invert Lanczos
#: 20-60 ms (bench/edit_bench.py). The command line and the solver API still give every mode.
FULL_SPECTRUM_DOF = 400
#: At least this many of the lowest modes, ...
LOWEST_MODES = 40
#: ... and every mode below this factor times the top edge of the highest source band (its
#: margin included), so the margin check sees every mode that can come near a source.
COVER_FACTOR = 1.5


def mode_count(system) -> tuple[int | None, float]:
    """How many of the lowest modes the window computes for ``system`` (None: all of them),
    and the frequency (Hz) below which it must have every mode (0 when no source asks)."""
    from solver.margins import source_bands

    n = system.n_dof
    if n <= FULL_SPECTRUM_DOF:
        return None, 0.0
    tops = [hi_w for *_rest, hi_w in source_bands(system.model)]
    cover = COVER_FACTOR * max(tops) if tops else 0.0
    want = LOWEST_MODES
    if cover > 0:
        from solver.modes import _count_below

        below = _count_below(system.K, system.M, (2 * math.pi * cover) ** 2)
        if below is None:
            return None, cover       # the count is not to be trusted: every mode
        want = max(want, below + 1)
    return (None if 3 * want > n else want), cover


def analyse(model):
    """The window's analysis of ``model`` (module-level, so the worker process can import it):
    ``solver.analyse`` with every mode up to :data:`FULL_SPECTRUM_DOF` DOFs; above, the lowest
    modes (:func:`mode_count`) and a note saying how many of how many."""
    import solver
    from solver.analysis import Analysis
    from solver.metrics import energy_fractions, sensitivities

    if dof_count(model) <= FULL_SPECTRUM_DOF:
        return solver.analyse(model)
    system = solver.assemble(model)
    count, cover = mode_count(system)
    modal = solver.modes(system, count=count)
    warnings = list(modal.warnings)
    if modal.message:
        warnings.insert(0, modal.message)
    if modal.n_modes < system.n_dof:
        top = float(modal.frequencies_hz[-1]) if modal.n_modes else 0.0
        covered = (f"; every source band and its margin lies below {cover:.4g} Hz"
                   if cover > 0 else "")
        warnings.append(f"the lowest {modal.n_modes} of {system.n_dof:,} modes are computed (up"
                        f" to {top:.4g} Hz{covered}); springwright solve FILE lists every mode")
    return Analysis(model=model, system=system, modal=modal, energy=energy_fractions(modal),
                    sensitivity=sensitivities(modal), warnings=tuple(dict.fromkeys(warnings)))


def sweep_point(model, element_id: str, value: float, field: str):
    """Frequencies (Hz) of every mode with one element at ``value`` (``solver.sweep`` of one
    value), shape (n_modes,); of the lowest :data:`LOWEST_MODES` above
    :data:`FULL_SPECTRUM_DOF` DOFs, as the window's analysis."""
    import solver

    count = LOWEST_MODES if dof_count(model) > FULL_SPECTRUM_DOF else None
    return solver.sweep(model, element_id, [value], field=field,
                        count=count).frequencies_hz[0]


def dof_count(model) -> int:
    """Upper estimate of the DOFs of a model (unlocked directions of every mass)."""
    n_dir = len(model.directions)
    return sum(n_dir - len(m.fixed) for m in model.masses)


def sweep(model, element_id: str, values, field: str):
    """Frequencies (Hz) of every mode at each of ``values`` (``solver.sweep``), shape
    (len(values), n_modes)."""
    import solver

    return solver.sweep(model, element_id, list(values), field=field).frequencies_hz


atexit.register(shutdown)
