"""Property-based checks of the depolarization factors and polarizabilities (hypothesis)."""

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from dipolearray.shapes import depolarization_factors, polarizability_tensors

axis = st.floats(min_value=1e-2, max_value=1e2, allow_nan=False)


@settings(max_examples=200, deadline=None)
@given(axis, axis, axis)
def test_factors_sum_to_one_and_order_inversely(a, b, c):
    L = depolarization_factors(np.array([a, b, c]))
    assert abs(L.sum() - 1.0) < 1e-12
    assert np.all(L > 0) and np.all(L < 1)
    # A longer semi-axis never has a larger depolarization factor (Osborn 1945).
    order = np.argsort([a, b, c], kind="stable")
    assert np.all(np.diff(L[order]) <= 1e-12)


@settings(max_examples=100, deadline=None)
@given(axis, axis, axis, st.floats(min_value=1.01, max_value=1e3), st.floats(min_value=1.0, max_value=10.0))
def test_high_permittivity_body_polarizes_along_field(a, b, c, ratio, eps_h):
    eps_i = ratio * eps_h
    # eps_i > eps_h: every principal polarizability is positive and below the
    # conductor limit abc / (3 L_k) (Landau & Lifshitz, Electrodynamics of Continuous
    # Media, sec. 4, from memory).
    alpha = polarizability_tensors(np.array([[a, b, c]]), np.eye(3)[None], [eps_i], eps_h)[0]
    k = np.diag(alpha)
    L = depolarization_factors(np.array([a, b, c]))
    assert np.all(k > 0)
    assert np.all(k <= a * b * c / (3 * L) * (1 + 1e-12))
