"""Turn user input into checked arrays; every message names the offending key.

Deep code (kernels, solvers) trusts what passes through here.
"""

from __future__ import annotations

import numbers

import numpy as np

from .errors import InputError


def _describe(value) -> str:
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


def as_float_array(value, key: str, shape=None, *, allow_complex=False, finite=True):
    """Return ``value`` as a C-contiguous float (or complex) array.

    Parameters
    ----------
    value : array_like
        The user's input.
    key : str
        Name used in error messages.
    shape : tuple, optional
        Expected shape; ``None`` entries match any length, e.g. ``(None, 3)``.
    allow_complex : bool
        Keep a complex dtype instead of rejecting it.
    finite : bool
        Reject NaN and infinities.

    Returns
    -------
    ndarray
        A new read-write array (the caller's input is never aliased).
    """
    try:
        arr = np.array(value, copy=True)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{key}: cannot read {_describe(value)} as numbers ({exc})", key) from None
    if arr.dtype == object or arr.dtype.kind not in "biufc":
        raise InputError(f"{key}: expected numbers, got {_describe(value)}", key)
    if arr.dtype.kind == "c":
        if not allow_complex:
            if np.any(arr.imag != 0):
                raise InputError(f"{key}: expected real numbers, got complex values", key)
            arr = arr.real
        arr = arr.astype(np.complex128) if arr.dtype.kind == "c" else arr.astype(np.float64)
    else:
        arr = arr.astype(np.float64)
    if shape is not None:
        ok = arr.ndim == len(shape) and all(
            s is None or s == n for s, n in zip(shape, arr.shape, strict=True)
        )
        if not ok:
            want = "(" + ", ".join("N" if s is None else str(s) for s in shape) + ")"
            raise InputError(f"{key}: expected shape {want}, got {arr.shape}", key)
    if finite and not np.all(np.isfinite(arr)):
        bad = np.argwhere(~np.isfinite(arr))[0]
        raise InputError(
            f"{key}: values must be finite, found {arr[tuple(bad)]} at index {tuple(int(b) for b in bad)}",
            key,
        )
    return np.ascontiguousarray(arr)


def as_positive(value, key: str, *, allow_zero=False) -> float:
    """Return a positive finite float or raise :class:`InputError` naming ``key``."""
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise InputError(f"{key}: expected a positive number, got {_describe(value)}", key)
    v = float(value)
    if not np.isfinite(v) or v < 0 or (v == 0 and not allow_zero):
        allowed = ">= 0" if allow_zero else "> 0"
        raise InputError(f"{key}: expected a finite number {allowed}, got {v!r}", key)
    return v


def as_int(value, key: str, *, minimum=None, maximum=None) -> int:
    """Return an integer within ``[minimum, maximum]`` or raise naming ``key``."""
    if isinstance(value, bool) or not isinstance(value, numbers.Integral):
        raise InputError(f"{key}: expected an integer, got {_describe(value)}", key)
    v = int(value)
    if minimum is not None and v < minimum:
        raise InputError(f"{key}: expected an integer >= {minimum}, got {v}", key)
    if maximum is not None and v > maximum:
        raise InputError(f"{key}: expected an integer <= {maximum}, got {v}", key)
    return v


def as_permittivity(value, key: str) -> complex | float:
    """Check a relative permittivity in the convention ``eps = eps' - 1j*eps''``.

    Returns a float when the value is real, a complex otherwise. The real part must be
    non-zero and finite; the imaginary part must be <= 0 (a lossy material has
    ``eps'' >= 0``).
    """
    if isinstance(value, bool) or not isinstance(value, numbers.Number):
        raise InputError(f"{key}: expected a real or complex permittivity, got {_describe(value)}", key)
    v = complex(value)
    if not (np.isfinite(v.real) and np.isfinite(v.imag)):
        raise InputError(f"{key}: permittivity must be finite, got {value!r}", key)
    if v.imag > 0:
        raise InputError(
            f"{key}: imaginary part must be <= 0 (convention eps = eps' - 1j*eps'' with "
            f"eps'' >= 0 for a lossy material), got {value!r}",
            key,
        )
    if v == 0:
        raise InputError(f"{key}: permittivity must be non-zero, got {value!r}", key)
    return v.real if v.imag == 0 else v


def check_choice(value, key: str, allowed) -> str:
    """Return ``value`` if it is one of ``allowed``, else raise naming the choices."""
    if value not in allowed:
        choices = ", ".join(repr(a) for a in allowed)
        hint = nearest(value, allowed) if isinstance(value, str) else None
        extra = f" (did you mean {hint!r}?)" if hint else ""
        raise InputError(f"{key}: {value!r} is not one of {choices}{extra}", key)
    return value


def nearest(word: str, candidates) -> str | None:
    """Closest candidate to ``word``, or ``None`` if nothing is close.

    A candidate that is a prefix of ``word`` or starts with it (``volum`` ->
    ``volume_fraction``, ``epsilon`` -> ``eps``) wins; otherwise edit similarity.
    """
    import difflib

    cands = [str(c) for c in candidates]
    w = str(word)
    prefix = [c for c in cands if len(min(c, w, key=len)) >= 3 and (w.startswith(c) or c.startswith(w))]
    if prefix:
        return max(prefix, key=lambda c: difflib.SequenceMatcher(None, w, c).ratio())
    hits = difflib.get_close_matches(w, cands, n=1, cutoff=0.6)
    return hits[0] if hits else None
