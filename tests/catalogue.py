"""Catalogue of scenes crossed with every solver and backend in the tests."""

from __future__ import annotations

import numpy as np

import dipolearray as da
from dipolearray.arrange import chain, cubic_lattice_sphere, random_sequential_addition
from dipolearray.shapes import rotation_to_axis


def sphere_scene(positions, eps=10.0, eps_host=2.0, radius=1.0, **kw):
    pop = da.Population(da.Sphere(radius), da.Material(eps), name="s")
    return da.Scene(positions, pop, host=da.Material(eps_host), **kw)


def _tilted_spheroids():
    rng = np.random.default_rng(5)
    lay = random_sequential_addition(40, 0.05, radius=2.0, rng=rng)
    pop = da.Population(da.Spheroid(polar=2.0, equatorial=0.8), da.Material(15.0 - 2.0j))
    rots = np.array([rotation_to_axis(v) for v in rng.normal(size=(40, 3))])
    return da.Scene(lay.positions, pop, host=da.Material(2.5), rotations=rots)


def _dense_high_contrast():
    lay = cubic_lattice_sphere(2.02, 3 * 2.02)
    return sphere_scene(lay.positions, eps=1000.0, eps_host=1.0, sample_radius=lay.sample_radius)


CATALOGUE = {
    "isolated_sphere": lambda: sphere_scene([[0.0, 0.0, 0.0]]),
    "pair_along_field": lambda: sphere_scene([[0, 0, 0], [0, 0, 2.3]]),
    "pair_across_field": lambda: sphere_scene([[0, 0, 0], [2.3, 0, 0]]),
    "chain": lambda: sphere_scene(chain(15, 2.1).positions, eps=30.0),
    "cubic_cut": lambda: sphere_scene(cubic_lattice_sphere(2.5, 7.5).positions),
    "dilute_random": lambda: sphere_scene(random_sequential_addition(120, 0.05, rng=1).positions, eps=8.0),
    "complex_permittivity": lambda: sphere_scene(
        random_sequential_addition(80, 0.1, rng=2).positions, eps=12.0 - 3.0j, eps_host=2.0
    ),
    "tilted_spheroids": _tilted_spheroids,
    "low_permittivity_voids": lambda: sphere_scene(
        random_sequential_addition(100, 0.15, rng=4).positions, eps=1.0, eps_host=4.0
    ),
    "dense_high_contrast": _dense_high_contrast,
    "periodic_random": lambda: da.Scene.from_arrangement(
        random_sequential_addition(60, 0.2, region="periodic", rng=6),
        da.Population(da.Sphere(1.0), da.Material(9.0 - 1.0j)),
        host=da.Material(2.0),
    ),
}

#: Scenes on which the plain fixed-point iteration is expected to diverge.
FIXED_POINT_DIVERGES = {"dense_high_contrast"}
