"""Field enhancement and field slices against closed forms for an isolated body."""

import numpy as np
import pytest

import dipolearray as da
from dipolearray.observables import field_enhancement, field_slice, slice_outlines


def _sphere(eps_i, eps_h):
    pop = da.Population(da.Sphere(1.0), da.Material(eps_i))
    return da.solve(da.Scene(np.zeros((1, 3)), pop, host=da.Material(eps_h), field=np.eye(3)))


@pytest.mark.parametrize("eps_i, eps_h", [(10.0, 2.0), (0.5, 1.0), (40.0 - 2.0j, 3.0 - 0.01j)])
def test_isolated_sphere_enhancement_matches_jackson(eps_i, eps_h):
    # Jackson (1999), Classical Electrodynamics 3rd ed., sec. 4.4: inside E = 3 eps_h/(eps_i + 2 eps_h) E0;
    # outside at the pole E = (1 + 2 beta) E0, at the equator (1 - beta) E0,
    # beta = (eps_i - eps_h)/(eps_i + 2 eps_h).
    enh = field_enhancement(_sphere(eps_i, eps_h))
    beta = (eps_i - eps_h) / (eps_i + 2 * eps_h)
    np.testing.assert_allclose(enh.local, 1.0, rtol=1e-12)
    np.testing.assert_allclose(enh.interior, abs(3 * eps_h / (eps_i + 2 * eps_h)), rtol=1e-12)
    outside = max(abs(1 + 2 * beta), abs(1 - beta))
    np.testing.assert_allclose(enh.surface, outside, rtol=1e-12)
    st = enh.statistics()
    assert st["surface"]["max"] == pytest.approx(outside) and st["surface"]["argmax_body"] == 0
    assert st["local"]["p99"] == pytest.approx(1.0)


def test_surface_field_matches_field_just_outside_a_pair():
    # Two spheres along z: the host field sampled just outside the pole of each body (by field_at,
    # an independent path through the dipole fields) is the surface value within the sampling offset.
    pop = da.Population(da.Sphere(1.0), da.Material(20.0))
    sc = da.Scene(np.array([[0, 0, 0.0], [0, 0, 2.6]]), pop, host=da.Material(2.0), field=[[0, 0, 1.0]])
    sol = da.solve(sc)
    enh = field_enhancement(sol)
    # Outside pole of body 0 away from its neighbour: at -z.
    eps = 1e-6
    pts = np.array([[0, 0, -1 - eps]])
    outside = np.linalg.norm(da.field_at(sol, pts)[0, :, 0])
    # The point-dipole model: the body's own field at its surface plus the neighbour's field there
    # differs from the uniform-local-field estimate by the neighbour's field gradient across the body.
    assert enh.surface[0, 0] == pytest.approx(outside, rel=0.05)
    assert enh.surface.max() > 1 + 2 * (18 / 24)  # coupling raises the pair above the isolated value


def test_field_slice_far_field_and_interior():
    sol = _sphere(10.0, 2.0)
    d = field_slice(sol, normal="y", resolution=41, direction=2, extent=(-6, 6, -6, 6))
    assert d["magnitude"].shape == (41, 41) and d["axes"] == ("x", "z")
    corner = d["magnitude"][0, 0]  # r = 6 sqrt 2: dipole field ~ beta / r^3
    assert corner == pytest.approx(1.0, abs=0.01)
    inside = d["magnitude"][d["inside"]]
    assert inside.size > 0
    np.testing.assert_allclose(inside, 3 * 2.0 / 14.0, rtol=1e-12)
    with pytest.raises(da.InputError, match="normal"):
        field_slice(sol, normal="w")
    with pytest.raises(da.InputError, match="direction"):
        field_slice(sol, direction=5)


def test_slice_outlines_of_sphere_and_tilted_spheroid():
    pop = da.Population(da.Sphere(2.0), da.Material(5.0))
    sc = da.Scene(np.array([[1.0, 0.5, -1.0]]), pop, host=da.Material(1.0))
    ((u, v, w, h, _),) = slice_outlines(sc, "y", 1.5)
    assert (u, v) == pytest.approx((1.0, -1.0))
    assert w == pytest.approx(2 * np.sqrt(4 - 1.0)) and h == pytest.approx(w)
    assert slice_outlines(sc, "y", 3.0).shape == (0, 5)
    # A spheroid tilted 30 degrees about y, cut by y = 0: an ellipse whose long axis is at 60 degrees
    # from x in the (x, z) plane, semi-axes equal to the body's (the plane holds both axes).
    c, s = np.cos(np.radians(30)), np.sin(np.radians(30))
    rot = np.array([[c, 0, s], [0, 1, 0], [-s, 0, c]])
    sp = da.Scene(
        np.zeros((1, 3)),
        da.Population(da.Spheroid(polar=3.0, equatorial=1.0), da.Material(5.0)),
        host=da.Material(1.0),
        rotations=rot[None],
    )
    ((_, _, w, h, ang),) = slice_outlines(sp, "y", 0.0)
    assert sorted([w, h]) == pytest.approx([2.0, 6.0])
    axis = np.array([np.cos(np.radians(ang)), np.sin(np.radians(ang))]) * (1 if w > h else 0)
    if w < h:
        axis = np.array([-np.sin(np.radians(ang)), np.cos(np.radians(ang))])
    body_axis_xz = rot[:, 2][[0, 2]]
    assert abs(abs(axis @ body_axis_xz) - 1) < 1e-9
