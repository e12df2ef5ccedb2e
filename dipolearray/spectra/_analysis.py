from __future__ import annotations

import math

import numpy as np

from ..errors import InputError


def loss_peak(frequency_hz, eps_loss):
    """Frequency and width of the largest loss peak of a sampled ``eps''(f)``.

    Parameters
    ----------
    frequency_hz : (F,) array_like, increasing
    eps_loss : (F,) array_like
        ``eps''`` (``eps = eps' - j eps''``).

    Returns
    -------
    dict
        ``frequency_hz`` (peak, refined by a parabola through the three samples around
        the maximum in ``log f``), ``eps_loss`` (peak value), ``width_decades`` (full
        width at half maximum in decades of frequency, ``nan`` when the half-maximum
        is not reached inside the grid on both sides) and ``inside`` (the maximum is
        not at an end of the grid). A Debye peak is 1.14 decades wide.
    """
    f = np.asarray(frequency_hz, dtype=float)
    y = np.asarray(eps_loss, dtype=float)
    if f.ndim != 1 or f.shape != y.shape or f.size < 3 or np.any(np.diff(f) <= 0):
        raise InputError(
            "frequency_hz: expected an increasing 1-D grid the length of eps_loss", "frequency_hz"
        )
    x = np.log10(f)
    k = int(np.argmax(y))
    inside = 0 < k < len(y) - 1
    xp, yp = x[k], y[k]
    if inside:
        y0, y1, y2 = y[k - 1], y[k], y[k + 1]
        h = x[k + 1] - x[k]
        den = y0 - 2 * y1 + y2
        if den < 0 and abs(x[k] - x[k - 1] - h) < 1e-9 * abs(h):
            d = 0.5 * (y0 - y2) / den
            xp, yp = x[k] + d * h, y1 - 0.25 * (y0 - y2) * d
    half = 0.5 * yp

    def crossing(indices):
        prev = k
        for i in indices:
            if y[i] < half:
                # Linear in log f between the last sample above and the first below.
                return x[prev] + (half - y[prev]) * (x[i] - x[prev]) / (y[i] - y[prev])
            prev = i
        return math.nan

    lo = crossing(range(k - 1, -1, -1))
    hi = crossing(range(k + 1, len(y)))
    return {
        "frequency_hz": float(10**xp),
        "eps_loss": float(yp),
        "width_decades": float(hi - lo),
        "inside": bool(inside),
    }
