from __future__ import annotations

import numpy as np

from ..operators import make_operator


def block_apply(blocks, x):
    """Per-body block products: ``(N, m, m) @ (N, m, K) -> (N, m, K)``.

    ``blocks`` may also be a response object with an ``apply`` method (the multipole
    backend's block-diagonal response).
    """
    if hasattr(blocks, "apply"):
        return blocks.apply(x)
    return np.einsum("nij,njk->nik", blocks, x)


def _block_solve(blocks, x):
    """Per-body least-squares ``blocks^-1 x``."""
    out = np.empty(x.shape, dtype=np.result_type(blocks, x))
    for i in range(x.shape[0]):
        out[i] = np.linalg.lstsq(blocks[i], x[i], rcond=None)[0]
    return out


def column_norms(x):
    """2-norm of each right-hand side of an ``(N, m, K)`` array -> ``(K,)``."""
    return np.sqrt(np.einsum("nck,nck->k", x.conj(), x).real)


class MomentSystem:
    """``M p = b`` with ``M = I - alpha T`` and ``b = alpha E0`` for one scene.

    With ``m = op.n_per_body`` unknowns per body (3 for dipoles); operators that carry
    more than the dipole provide ``response()`` and ``response_sqrt()`` (the body
    blocks of ``alpha`` and ``alpha^1/2``). The applied field enters the first three
    unknowns (the dipole degree) only.
    """

    def __init__(self, scene, operator=None):
        self.scene = scene
        self.op = operator if operator is not None else make_operator(scene)
        self.n_per_body = int(self.op.n_per_body)
        if hasattr(self.op, "response"):
            self.alpha = self.op.response()
            self.alpha_sqrt = self.op.response_sqrt()
        else:
            self.alpha = np.asarray(scene.polarizability)
            self.alpha_sqrt = np.asarray(scene.polarizability_sqrt)
        e0 = np.asarray(scene.field, dtype=float).T  # (3, K)
        if self.n_per_body == 3:
            self.e0 = np.broadcast_to(e0, (scene.n_bodies, 3, e0.shape[1]))
        else:
            full = np.zeros((scene.n_bodies, self.n_per_body, e0.shape[1]))
            full[:, :3] = e0[None]
            self.e0 = full
        self.b = block_apply(self.alpha, self.e0)
        self.b_norm = column_norms(self.b)
        self.dtype = scene.dtype

    @property
    def n_rhs(self) -> int:
        """Number of right-hand sides K."""
        return self.b.shape[2]

    def coupling(self, p):
        """``alpha T p``."""
        return block_apply(self.alpha, self.op.apply(p))

    def residual(self, p):
        """``b - M p = b + alpha T p - p``."""
        return self.b + self.coupling(p) - p

    def residual_norms(self, p):
        """``column_norms(residual(p))``, remembered for the last ``p`` (the same object).

        A solver's final check and the caller's report then cost one apply, not two;
        callers must not modify ``p`` in place after asking.
        """
        last = getattr(self, "_last_norms", None)
        if last is not None and last[0] is p:
            return last[1]
        norms = column_norms(self.residual(p))
        self._last_norms = (p, norms)
        return norms

    def with_rhs(self, r):
        """The same operator with right-hand side ``r`` (for a correction ``M delta = r``).

        ``r`` must lie in the range of ``alpha`` (a residual of this system does).
        """
        import copy

        new = copy.copy(self)
        new._last_norms = None
        new.e0 = self.alpha.solve(r) if hasattr(self.alpha, "solve") else _block_solve(self.alpha, r)
        new.b = block_apply(self.alpha, new.e0)
        new.b_norm = column_norms(new.b)
        return new

    def tolerance(self, rtol, atol):
        """Per right-hand side absolute threshold ``max(rtol ||b||, atol)``."""
        return np.maximum(rtol * self.b_norm, atol)

    def relative(self, norms):
        """Residual norms relative to ``||b||`` (zero right-hand sides count as 0)."""
        safe = np.where(self.b_norm > 0, self.b_norm, 1.0)
        return norms / safe


def estimate_spectral_radius(scene, operator=None, n_iter=40, seed=0):
    """Estimate the spectral radius of ``alpha T`` by power iteration.

    Parameters
    ----------
    scene : Scene
    operator : InteractionOperator, optional
    n_iter : int
        Power steps (one operator apply each).
    seed : int
        Seed of the random start vector.

    Returns
    -------
    float
        ``sqrt(||A^(n+1) v|| / ||A^(n-1) v||)``, which also settles when the dominant
        eigenvalues come as a ``+lambda, -lambda`` pair. The plain fixed-point
        iteration converges only when this is below one.
    """
    system = MomentSystem(scene, operator)
    rng = np.random.default_rng(seed)
    v = rng.standard_normal((scene.n_bodies, system.n_per_body, 1)).astype(system.dtype)
    v /= column_norms(v)[0]
    norms = []
    for _ in range(n_iter):
        w = system.coupling(v)
        nw = float(column_norms(w)[0])
        norms.append(nw)
        if nw == 0.0:
            return 0.0
        v = w / nw
    if len(norms) < 2:
        return norms[-1]
    return float(np.sqrt(norms[-1] * norms[-2]))
