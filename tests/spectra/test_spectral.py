"""Spectral representation against direct solves, sum rules, Clausius-Mossotti and Maxwell-Wagner-Sillars."""

import math

import numpy as np
import pytest

import dipolearray as da
from dipolearray.arrange import lattice, random_sequential_addition
from dipolearray.materials import EPS0, constant, debye
from dipolearray.observables import effective_permittivity
from dipolearray.spectra import frequency_response, spectral_representation


def _scene(kind):
    rng = np.random.default_rng(3)
    if kind == "periodic":
        arr = random_sequential_addition(60, 0.2, region="periodic", rng=rng)
        return da.Scene.from_arrangement(
            arr, da.Population(da.Sphere(1.0), da.Material(1.0)), host=da.Material(1.0)
        )
    if kind == "open":
        arr = random_sequential_addition(150, 0.2, region="sphere", rng=rng)
        return da.Scene.from_arrangement(
            arr, da.Population(da.Sphere(1.0), da.Material(1.0)), host=da.Material(1.0)
        )
    if kind == "polydisperse":
        semi = np.exp(rng.normal(0, 0.2, 120))[:, None] * np.ones(3)
        arr = random_sequential_addition(120, 0.15, region="sphere", semi_axes=semi, rng=rng)
        return da.Scene.from_arrangement(
            arr, da.Population(da.Sphere(1.0), da.Material(1.0)), host=da.Material(1.0)
        )
    # Randomly oriented prolate spheroids.
    from scipy.spatial.transform import Rotation

    semi = np.tile([1.0, 1.0, 2.0], (80, 1))
    rot = Rotation.random(80, random_state=4).as_matrix()
    arr = random_sequential_addition(80, 0.1, region="sphere", semi_axes=semi, rotations=rot, rng=rng)
    pop = da.Population(da.Spheroid(polar=2.0, equatorial=1.0), da.Material(1.0))
    return da.Scene.from_arrangement(arr, pop, host=da.Material(1.0))


def _direct(scene, eh, ei):
    pops = tuple(da.Population(p.shape, da.Material(ei)) for p in scene.populations)
    sol = da.solve(scene.replace(host=da.Material(eh), populations=pops), "direct")
    return effective_permittivity(sol).tensor


@pytest.mark.parametrize("kind", ["periodic", "open", "polydisperse", "spheroids"])
@pytest.mark.parametrize("method", ["eigen", "lanczos"])
def test_spectrum_agrees_with_direct_solves(kind, method):
    scene = _scene(kind)
    sp = spectral_representation(scene, method=method)
    assert sp.converged
    for eh, ei in [(2.0, 25.0), (3.0 - 0.02j, 40.0 - 5.0j), (1.0, 0.5), (2.0, -8.0 - 1.0j)]:
        ref = _direct(scene, eh, ei)
        got = sp.effective_permittivity(eh, ei)
        assert np.max(np.abs(got - ref)) <= 1e-8 * np.max(np.abs(ref)), (eh, ei)


def test_first_sum_rule_residues_sum_to_the_volume_fraction():
    # Bergman (1978): sum_n B_n = phi for every arrangement (here exact at point-dipole level).
    for kind in ("periodic", "spheroids"):
        sp = spectral_representation(_scene(kind), method="eigen")
        if kind == "periodic":
            np.testing.assert_allclose(sp.residue_sum(), sp.volume_fraction * np.eye(3), atol=1e-12)
        else:
            np.testing.assert_allclose(np.trace(sp.residue_sum()) / 3, sp.volume_fraction, rtol=1e-12)
        assert np.all(np.linalg.eigvalsh(sp.weights) >= -1e-12)  # positive measure


@pytest.mark.parametrize("kind", ["sc", "bcc", "fcc"])
@pytest.mark.parametrize("method", ["eigen", "lanczos"])
def test_cubic_lattice_has_the_single_clausius_mossotti_pole(kind, method):
    # Lorentz local field on a cubic lattice: eps/eps_h = (1 + 2 phi beta)/(1 - phi beta), i.e. one
    # pole at s = (1 - phi)/3 with residue phi; first moment phi (1 - phi)/3 (Bergman 1978).
    phi = 0.25
    arr = lattice(kind, radius=1.0, volume_fraction=phi, sample="periodic", cells=2)
    sc = da.Scene.from_arrangement(
        arr, da.Population(da.Sphere(1.0), da.Material(1.0)), host=da.Material(1.0)
    )
    sp = spectral_representation(sc, method=method)
    w = np.trace(sp.residues, axis1=1, axis2=2) / 3
    big = w > 1e-10
    np.testing.assert_allclose(sp.poles[big], (1 - phi) / 3, atol=1e-10)
    assert w[big].sum() == pytest.approx(phi, rel=1e-10)
    np.testing.assert_allclose(sp.first_moment(), phi * (1 - phi) / 3 * np.eye(3), atol=1e-10)


def test_maxwell_wagner_loss_peak_of_dilute_conducting_spheres():
    # Maxwell-Wagner-Sillars (Sillars 1937): dilute conducting spheres in a lossless host relax
    # with tau = eps0 (eps_i + 2 eps_h) / (sigma_i + 2 sigma_h); the composite's eps'' peaks at w tau = 1.
    arr = random_sequential_addition(200, 0.01, region="periodic", rng=7)
    sc = da.Scene.from_arrangement(
        arr, da.Population(da.Sphere(1.0), da.Material(1.0)), host=da.Material(1.0)
    )
    sp = spectral_representation(sc)
    eps_i, sigma_i, eps_h = 10.0, 1e-6, 2.5
    tau = EPS0 * (eps_i + 2 * eps_h) / sigma_i
    f = np.logspace(-3, 3, 2001) / (2 * math.pi * tau)
    eps = frequency_response(sp, constant(eps_h), constant(eps_i, sigma_dc=sigma_i), f)
    loss = -np.imag(np.trace(eps, axis1=1, axis2=2)) / 3
    k = int(np.argmax(loss))
    # Within the dilute error: the Maxwell Garnett peak at phi moves by a relative O(phi).
    assert 2 * math.pi * f[k] * tau == pytest.approx(1.0, rel=3 * 0.01 + 2e-3)


def test_kramers_kronig_consistency_of_a_computed_spectrum():
    # Causality: eps'(w) - eps_inf = (2/pi) int_0^inf [w' eps''(w') - w eps''(w)] / (w'^2 - w^2) dw'
    # (Kramers-Kronig with the singularity subtracted); checked to 1e-3 of the relaxation strength.
    sp = spectral_representation(_scene("open"), method="eigen")
    fill = debye(6.0, 30.0, 1e-6)
    host = constant(2.5)
    grid = np.logspace(-2, 14, 6001)
    eps = np.trace(frequency_response(sp, host, fill, grid), axis1=1, axis2=2) / 3
    w = 2 * math.pi * grid
    loss = -eps.imag
    eps_inf = eps.real[-1]
    lnw = np.log(w)
    for i in (2000, 2600, 3000, 3400):
        num = w * loss - w[i] * loss[i]
        den = w**2 - w[i] ** 2
        den[i] = 1.0
        integrand = num / den * w
        integrand[i] = 0.5 * (integrand[i - 1] + integrand[i + 1])
        kk = 2 / math.pi * np.trapezoid(integrand, lnw)
        assert kk == pytest.approx(eps.real[i] - eps_inf, abs=1e-3 * (eps.real[0] - eps_inf))


def test_pole_density_integrates_to_the_fraction_and_bad_input():
    sp = spectral_representation(_scene("periodic"), method="eigen")
    centres, dens = sp.pole_density(bins=40)
    width = np.diff(np.histogram_bin_edges(sp.poles, bins=40))
    assert np.sum(dens * width) == pytest.approx(sp.volume_fraction, rel=1e-10)
    with pytest.raises(da.InputError, match="method"):
        spectral_representation(_scene("periodic"), method="qr")
    with pytest.raises(da.InputError, match="eps_inclusion"):
        sp.effective_permittivity(2.0, 2.0)


@pytest.mark.parametrize("phi", [0.1, 0.25])
def test_first_moment_of_a_random_periodic_arrangement(phi):
    # Bergman (1978): for an isotropic two-phase composite sum_n B_n s_n = phi (1 - phi) / 3.
    # At point-dipole level the isotropic part holds exactly (the dipole tensor is traceless,
    # the conducting boundary supplies the -phi^2/3).
    arr = random_sequential_addition(150, phi, region="periodic", rng=11)
    sc = da.Scene.from_arrangement(
        arr, da.Population(da.Sphere(1.0), da.Material(1.0)), host=da.Material(1.0)
    )
    sp = spectral_representation(sc, method="eigen")
    assert np.trace(sp.first_moment()) / 3 == pytest.approx(phi * (1 - phi) / 3, rel=1e-9)
