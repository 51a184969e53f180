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


def analyse(model):
    """``solver.analyse(model)`` (module-level, so the worker process can import it)."""
    import solver

    return solver.analyse(model)


def sweep_point(model, element_id: str, value: float, field: str):
    """Frequencies (Hz) of every mode with one element at ``value`` (``solver.sweep`` of one
    value), shape (n_modes,)."""
    import solver

    return solver.sweep(model, element_id, [value], field=field).frequencies_hz[0]


def sweep(model, element_id: str, values, field: str):
    """Frequencies (Hz) of every mode at each of ``values`` (``solver.sweep``), shape
    (len(values), n_modes)."""
    import solver

    return solver.sweep(model, element_id, list(values), field=field).frequencies_hz


atexit.register(shutdown)
