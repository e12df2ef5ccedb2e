"""The one place that decides how numba compiles dipolearray's kernels.

Policy
------
* ``cache=True``: compiled machine code is reused across processes.
* ``parallel=True`` for the O(N^2) loops (outer loop over targets, no shared writes).
* fastmath: only ``reassoc``, ``contract``, ``nsz`` and ``arcp``. Reassociation lets
  LLVM vectorise the pair sums; ``contract`` allows FMA. NaN and infinity semantics
  are kept (``nnan``/``ninf`` are *not* set) because the kernels use a select on
  ``r**2 > 0`` to drop self-pairs, and approximate functions (``afn``) are not
  allowed: accuracy of the inverse square root is restored explicitly (see
  ``_dipole.py``).
* 512-bit vectors: on processors with AVX-512, LLVM by default tunes for 256-bit
  vectors ("prefer-256-bit"). The pair kernels are compute bound and run about 25%
  faster with full-width vectors (measured with ``bench/bench_engine.py``), so when
  the user has not set ``NUMBA_CPU_FEATURES`` and numba has not compiled anything yet
  we drop that preference for this process. This changes tuning only, never results
  beyond rounding.
"""

from __future__ import annotations

import numba

FASTMATH = frozenset({"reassoc", "contract", "nsz", "arcp"})


def _prefer_full_width_vectors() -> None:
    if numba.config.CPU_FEATURES is not None:
        return
    try:
        import llvmlite.binding as llb

        llb.initialize_native_target()
        features = llb.get_host_cpu_features().flatten()
    except Exception:  # pragma: no cover - exotic llvmlite builds
        return
    if "+avx512f" in features.split(","):
        numba.config.CPU_FEATURES = features + ",-prefer-256-bit"


_prefer_full_width_vectors()

JIT = dict(cache=True, fastmath=set(FASTMATH), nogil=True)
JIT_PARALLEL = dict(JIT, parallel=True)


def set_num_threads(n: int) -> None:
    """Set the number of threads the parallel kernels use (at most the CPU count)."""
    numba.set_num_threads(int(n))


def get_num_threads() -> int:
    """Number of threads the parallel kernels use."""
    return int(numba.get_num_threads())
