from __future__ import annotations


def set_num_threads(n: int) -> None:
    """Set the number of threads of the compiled kernels (1 to the CPU count)."""
    from ._kernels import set_num_threads as _set

    _set(n)


def get_num_threads() -> int:
    """Number of threads the compiled kernels use."""
    from ._kernels import get_num_threads as _get

    return _get()
