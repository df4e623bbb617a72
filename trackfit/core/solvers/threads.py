"""Run the solvers' small dense linear algebra on one BLAS thread.

The path solvers make thousands of BLAS and LAPACK calls on matrices of at most a few hundred
rows (the active block of the Gram matrix). For such sizes OpenBLAS's threads cost far more to
start and synchronize than they save: on a 2-core machine a Cholesky factorization of a
200 x 200 matrix measured 0.27 ms on one thread and 30 ms on two (benchmarks/README.md). Large
products (building Gram matrices from rows) run outside this guard and keep every thread.

The limit is set and restored by threadpoolctl, the small, well-kept library that joblib and
scikit-learn use for the same job: it finds every BLAS that numpy and scipy loaded, whatever
its vendor, which code of our own would do worse. Results never depend on it, only speed.
"""

from __future__ import annotations

import threading
from collections.abc import Iterator
from contextlib import contextmanager
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from threadpoolctl import ThreadpoolController

_lock = threading.Lock()
_depth = 0
_limiter = None
# Finding the loaded libraries took 1.3 ms per call on the benchmark machine, more than many
# whole fits of the test suite; a controller made once sets and restores limits in 0.02 ms.
# It only sees the libraries loaded when it is made, and the solvers import scipy lazily, so
# scipy.linalg (which loads scipy's own BLAS) is imported first.
_controller: ThreadpoolController | None = None


@contextmanager
def single_threaded() -> Iterator[None]:
    """Limit BLAS to one thread inside the block (re-entrant: only the outermost acts)."""
    global _depth, _limiter, _controller
    with _lock:
        if _depth == 0:
            if _controller is None:
                import scipy.linalg  # noqa: F401
                from threadpoolctl import ThreadpoolController

                _controller = ThreadpoolController()
            _limiter = _controller.limit(limits=1, user_api="blas")
        _depth += 1
    try:
        yield
    finally:
        with _lock:
            _depth -= 1
            if _depth == 0 and _limiter is not None:
                _limiter.restore_original_limits()
                _limiter = None
