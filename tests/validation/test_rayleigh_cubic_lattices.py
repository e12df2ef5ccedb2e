"""Cubic lattices of spheres beyond Clausius-Mossotti: the Rayleigh-method coefficient.

Source: the Rayleigh multipole method for cubic arrays of spheres (Rayleigh 1892, On the
influence of obstacles arranged in rectangular order upon the properties of a medium,
Phil. Mag. 34, 481; extended by McPhedran, R. C. and McKenzie, D. R. 1978, The
conductivity of lattices of spheres I. The simple cubic lattice, Proc. R. Soc. Lond. A
359, 45, and McKenzie, McPhedran and Derrick 1978, II. The body centred and face centred
cubic lattices, Proc. R. Soc. Lond. A 362, 211). For spheres of permittivity eps in a
unit host at volume fraction f,

    eps_eff = 1 + 3 f / (1/T1 - f - b T3 f^(10/3) + O(f^(14/3))),

T1 = (eps - 1)/(eps + 2), T3 = (eps - 1)/(eps + 4/3); the f^(10/3) term is the octupole
that the dipole lattice excites and that acts back on the dipoles. The coefficients
b = 1.305 (simple cubic), 0.129 (body-centred), 0.0753 (face-centred) are from memory
(the simple cubic one is Runge's correction of Rayleigh's 1.65). The point-dipole model
gives b = 0; the lattice-sum multipoles must reproduce each b, found here by fitting
the solved eps_eff at small f, where the O(f^(14/3)) term is a small known power.
"""

import warnings

import numpy as np
import pytest

import dipolearray as da
from dipolearray.arrange import lattice

pytestmark = pytest.mark.slow

B_FROM_MEMORY = {"sc": 1.305, "bcc": 0.129, "fcc": 0.0753}
CELLS = {"sc": 2, "bcc": 1, "fcc": 1}  # the smallest periodic box of edge >= 4 radii


def _eps_eff(kind, f, eps, order):
    arr = lattice(kind, volume_fraction=f, sample="periodic", cells=CELLS[kind])
    scene = da.Scene.from_arrangement(arr, da.Population(da.Sphere(1.0), da.Material(eps)))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        sol = da.solve(
            scene,
            backend="multipole",
            backend_options={"order": order, "accuracy": 1e-10, "check_error": False},
            rtol=1e-12,
        )
    assert sol.converged
    tensor = da.effective_permittivity(sol).tensor
    np.testing.assert_allclose(tensor, tensor[0, 0] * np.eye(3), atol=1e-10)  # cubic: isotropic
    return float(np.real(tensor[0, 0]))


@pytest.mark.parametrize("kind", ["sc", "bcc", "fcc"])
@pytest.mark.parametrize("eps", [10.0, 1e8])
def test_rayleigh_coefficient(kind, eps):
    t1, t3 = (eps - 1) / (eps + 2), (eps - 1) / (eps + 4 / 3)
    fs = np.array([0.02, 0.04, 0.08])
    y = np.array([(1 / t1 - f - 3 * f / (_eps_eff(kind, f, eps, 8) - 1)) / (t3 * f ** (10 / 3)) for f in fs])
    b = np.polyfit(fs ** (4 / 3), y, 2)[-1]
    assert b == pytest.approx(B_FROM_MEMORY[kind], rel=5e-3)
    # The point dipole misses the whole term.
    assert (1 / t1 - fs[0] - 3 * fs[0] / (_eps_eff(kind, fs[0], eps, 1) - 1)) == pytest.approx(0, abs=1e-11)


def test_dense_conducting_lattice_converges_with_order():
    # Simple cubic, f = 0.45 (gap 0.11 radius), conducting: eps_eff rises with the order
    # and settles (4.08284 at order 16, 4.08287 at 24, measured); the automatic order
    # meets its accuracy against order 20.
    f, eps = 0.45, 1e8
    vals = [_eps_eff("sc", f, eps, L) for L in (1, 3, 6, 10, 20)]
    assert all(b > a for a, b in zip(vals, vals[1:], strict=False))
    steps = np.abs(np.diff(vals))
    assert steps[-1] < 0.05 * steps[0]
    arr = lattice("sc", volume_fraction=f, sample="periodic", cells=2)
    scene = da.Scene.from_arrangement(arr, da.Population(da.Sphere(1.0), da.Material(eps)))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        sol = da.solve(scene, backend="multipole", backend_options={"accuracy": 1e-5}, rtol=1e-12)
    auto = float(np.real(da.effective_permittivity(sol).tensor[0, 0]))
    # Relative to the mean polarisation the error is of the requested accuracy (measured
    # 9.7e-6 at 1e-5; the two-sphere model counts one neighbour, a lattice site has six),
    # and the a posteriori estimate says how large it is (measured 9.2e-6).
    true_error = abs(auto - vals[-1]) / (vals[-1] - 1)
    assert true_error < 2e-5
    est = sol.extra["model_error"]["total_moment_error"]
    assert 0.5 * true_error < est < 2 * true_error
