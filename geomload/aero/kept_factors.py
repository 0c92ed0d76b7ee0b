"""The influence matrices of one lattice at several Mach numbers, solved with one LU.

The models of one lattice differ only in the Prandtl-Glauert stretch of x (neighbouring lattice
Mach bins are 0.4 % apart in 1/beta), so the LU factors of the first model's matrix A0 are a
close approximation of every later model's inverse. A later system A x = b is solved by
iterative refinement with those factors (Golub & Van Loan, Matrix Computations, 4th ed.,
sec. 3.5.3, iterative improvement; from memory):

    x_0 = A0^-1 b,    x_(k+1) = x_k + A0^-1 (b - A x_k),

which converges linearly, with the rate ||I - A0^-1 A|| (measured 0.003-0.007 between the five
Mach bins of a 3000-panel half wing, condition number 250), to the solution of A x = b. A step
costs two passes over an N^2 array (the residual product and the two triangular solves, 0.03 s
at 3000 panels) where a new LU costs 2/3 N^3 flops (0.65 s).

Stopping: after a correction of at most REFINE_TOL times the solution (what is left is then about
the rate times that, below the round-off of a direct solve). A step that does not shrink the
correction by STALL_RATIO, or MAX_STEPS steps, fall back to the direct LU of A (the factors of
which are then kept instead): never a less accurate answer. Measured at 3000 panels: 6-7 steps,
the result within 4e-15 of the direct solve (relative to the largest circulation), its residual
no larger than the direct solve's.

Used from MIN_PANELS equations on (below it a new LU is cheap, and the sample's lattices keep the
direct solve: their outputs stay the same to the bit).
"""

from __future__ import annotations

import contextlib

import numpy as np

MIN_PANELS = 1000  # equations from which a kept LU is reused: at 1000 a new LU costs about
# 25 ms, about six refinement steps; the sample's systems (400 and 800) stay direct
REFINE_TOL = 1e-14  # stop after a correction this small relative to the solution (each
# column's largest correction over its largest value)
STALL_RATIO = 0.5  # a step must at least halve the correction, else the direct solve is used
MAX_STEPS = 30


_CONTROLLER: list = []  # a threadpoolctl controller made after scipy.linalg's import


def _one_blas_thread():
    """One BLAS thread for every BLAS library loaded, scipy.linalg's own included (the
    process's controller in `geomload.threads` may predate its import, and a threaded LU or
    triangular solve on a shared machine costs more CPU for the same work: see
    `AeroModel._solve_dense`); nothing without threadpoolctl."""
    if not _CONTROLLER:
        import scipy.linalg  # noqa: F401 - loads the library the controller must see

        try:
            from threadpoolctl import ThreadpoolController

            _CONTROLLER.append(ThreadpoolController())
        except Exception:  # noqa: BLE001 - no control: the libraries' own threading is kept
            _CONTROLLER.append(None)
    c = _CONTROLLER[0]
    return contextlib.nullcontext() if c is None else c.limit(limits=1, user_api="blas")


def _lu_factor_quiet(a):
    """(lu, piv) of a (F-ordered, finite), factorised in its own memory: LAPACK getrf, the
    routine scipy.linalg.lu_factor calls, the same factors to the bit. An exactly singular
    matrix (getrf's info > 0: a zero pivot) is left to the caller's pivot check, without
    lu_factor's LinAlgWarning (printed on stderr by default, before the caller's own error)."""
    from scipy.linalg import get_lapack_funcs

    getrf, = get_lapack_funcs(("getrf",), (a,))
    lu, piv, info = getrf(a, overwrite_a=True)
    if info < 0:  # an argument LAPACK refused: a programming error, not the input's
        raise ValueError(f"getrf: illegal value in argument {-info}")
    return lu, piv


class KeptFactors:
    """LU factors of the first system solved in each slot (e.g. 0 and 1 for the two half
    systems of a mirror-symmetric lattice), reused for the later systems of the same slot.

    Attributes: direct (systems factorised), refined (systems solved by refinement), steps
    (refinement steps in all).
    """

    def __init__(self):
        self._lu = {}
        self.direct = self.refined = self.steps = 0

    def solve(self, A, rhs, slot=0) -> np.ndarray:
        """x (N, k) with A x = rhs: by refinement with the slot's kept factors, or by a new LU
        (kept for the slot). A: finite, C-ordered (N, N); when it is factorised its memory
        becomes the kept factors (A is overwritten: no copy of N^2 values). Raises
        numpy.linalg.LinAlgError when A is singular."""
        from scipy.linalg import lu_solve

        with _one_blas_thread():
            lu = self._lu.get(slot)
            if lu is not None:
                x = self._refine(A, rhs, lu, lu_solve)
                if x is not None:
                    self.refined += 1
                    return x
            # A^T is A's memory in Fortran order: LAPACK factorises it in place, and A x = b
            # is then solved as (A^T)^T x = b (trans=1)
            lu = _lu_factor_quiet(A.T)
            if not np.all(np.isfinite(lu[0])) or np.any(np.diagonal(lu[0]) == 0.0):
                raise np.linalg.LinAlgError("singular matrix")
            self._lu[slot] = lu
            self.direct += 1
            return lu_solve(lu, rhs, trans=1, check_finite=False)

    def _refine(self, A, rhs, lu, lu_solve):
        x = lu_solve(lu, rhs, trans=1, check_finite=False)
        prev = np.inf
        for _ in range(MAX_STEPS):
            dx = lu_solve(lu, rhs - A @ x, trans=1, check_finite=False)
            x += dx
            self.steps += 1
            # the largest correction of each column relative to that column's largest value
            rel = float(np.max(np.abs(dx).max(axis=0)
                               / np.maximum(np.abs(x).max(axis=0), np.finfo(float).tiny)))
            if not rel <= STALL_RATIO * prev:  # a stall or a non-finite step
                return None
            if rel <= REFINE_TOL:
                return x
            prev = rel
        return None


__all__ = ["KeptFactors", "MIN_PANELS", "REFINE_TOL", "STALL_RATIO", "MAX_STEPS"]
