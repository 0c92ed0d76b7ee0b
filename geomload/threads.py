"""One BLAS thread for a block of work: the process's one threadpoolctl controller, below every
stage (the geometry stage and the lattice assembly and solve use it).

The geometry's matrix products are thin: (n, 3) by (3, k) with n up to a few hundred thousand
(principal axes, profile extents, cap normals). OpenBLAS splits such a product over its threads
by rows, each element still computed by the same kernel, so the result is the same bit for bit
with one thread (checked on a 4-million-triangle wing); but on a shared machine the threads wait
for each other: a (200 000, 3) by (3, 2) product measured 230 ms threaded against 36 ms on one
thread at load 3.5 on 2 cores, 1.5 ms when warm.
"""

from __future__ import annotations

import contextlib

_CONTROLLER: list = []  # the threadpoolctl controller, made once per process (about 2 ms)


def blas_controller():
    """The process's threadpoolctl controller (the BLAS libraries loaded when first asked), or
    None without threadpoolctl."""
    if not _CONTROLLER:
        try:
            from threadpoolctl import ThreadpoolController

            _CONTROLLER.append(ThreadpoolController())
        except Exception:  # noqa: BLE001 - no control: the library's own threading is kept
            _CONTROLLER.append(None)
    return _CONTROLLER[0]


def one_blas_thread():
    """A context manager limiting BLAS to one thread (nothing when threadpoolctl is missing)."""
    c = blas_controller()
    return contextlib.nullcontext() if c is None else c.limit(limits=1, user_api="blas")
