import numpy as np
import pytest

from poreprobe import AtomSpheres, InputError, clearance_A


def test_clearance_matches_brute_force():
    rng = np.random.default_rng(1)
    coords = rng.uniform(-10, 10, (300, 3))
    radii = rng.choice([1.2, 1.52, 1.55, 1.7, 1.8], 300)
    pts = rng.uniform(-12, 12, (500, 3))
    brute = (np.linalg.norm(pts[:, None] - coords[None], axis=2) - radii[None]).min(1)
    value, index = clearance_A(pts, coords, radii, return_index=True)
    np.testing.assert_allclose(value, brute, atol=1e-12)
    np.testing.assert_allclose(
        np.linalg.norm(pts - coords[index], axis=1) - radii[index], brute, atol=1e-12
    )


def test_clearance_keeps_query_shape():
    spheres = AtomSpheres([[0, 0, 0], [5, 0, 0]], [1.0, 2.0])
    out = spheres.clearance_A(np.zeros((2, 3, 3)))
    assert out.shape == (2, 3)
    assert out[0, 0] == pytest.approx(-1.0)


@pytest.mark.parametrize(
    ("coords", "radii", "match"),
    [
        (np.zeros((0, 3)), [], "empty"),
        ([[0, 0, np.nan]], [1.0], "NaN"),
        ([[0, 0, 0]], [0.0], "> 0"),
        ([[0, 0, 0]], [1.0, 2.0], "1 values"),
    ],
)
def test_bad_spheres(coords, radii, match):
    with pytest.raises(InputError, match=match):
        AtomSpheres(coords, radii)
