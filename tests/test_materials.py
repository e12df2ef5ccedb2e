import pytest

from dipolearray import InputError, Material


def test_convention_rejects_gain():
    with pytest.raises(InputError, match="eps"):
        Material(3.0 + 0.1j)


@pytest.mark.parametrize("bad", [0.0, float("nan"), float("inf"), "3", None, True])
def test_bad_permittivity(bad):
    with pytest.raises(InputError, match="eps"):
        Material(bad)


def test_loss_tangent_and_real_collapse():
    m = Material(4.0 - 0.2j)
    assert m.is_lossy and m.loss_tangent == pytest.approx(0.05)
    assert isinstance(Material(4.0 + 0j).eps, float)
    assert not Material(4.0).is_lossy
