"""Reading and writing CCP4/MRC maps: axis order, voxel size, origin and bad files."""

import gzip
import shutil

import gemmi
import numpy as np
import pytest

from poreprobe.errors import InputError, QualityWarning
from poreprobe.io.density_map import density_map_from_array, read_density_map, write_density_map


@pytest.fixture
def small():
    rng = np.random.default_rng(3)
    values = rng.normal(size=(7, 5, 4)).astype(np.float32)
    return density_map_from_array(values, voxel_A=(1.0, 1.5, 2.0), origin_A=(3.0, -4.0, 5.0))


def _raw_map(path, stored, *, axes=(1, 2, 3), cell=None, sampling=None, starts=(0, 0, 0)):
    """Write ``stored`` (indexed column, row, section) with a hand-made header."""
    grid = gemmi.FloatGrid(np.asfortranarray(stored, dtype=np.float32))
    grid.set_unit_cell(gemmi.UnitCell(10, 10, 10, 90, 90, 90))
    ccp4 = gemmi.Ccp4Map()
    ccp4.grid = grid
    ccp4.update_ccp4_header(2, True)
    for word, value in zip((17, 18, 19), axes, strict=True):
        ccp4.set_header_i32(word, value)
    for word, value in zip((5, 6, 7), starts, strict=True):
        ccp4.set_header_i32(word, value)
    if sampling is not None:
        for word, value in zip((8, 9, 10), sampling, strict=True):
            ccp4.set_header_i32(word, value)
    if cell is not None:
        for word, value in zip(range(11, 17), cell, strict=True):
            ccp4.set_header_float(word, value)
    ccp4.write_ccp4_map(str(path))


def test_round_trip_keeps_values_voxel_and_origin(small, tmp_path):
    path = tmp_path / "m.mrc"
    write_density_map(small, path)
    back = read_density_map(path)
    assert np.array_equal(back.values, small.values)
    assert np.allclose(back.voxel_A, small.voxel_A)
    assert np.allclose(back.origin_A, small.origin_A)


def test_gzipped_map_reads(small, tmp_path):
    path = tmp_path / "m.map"
    write_density_map(small, path)
    with open(path, "rb") as src, gzip.open(tmp_path / "m.map.gz", "wb") as dst:
        shutil.copyfileobj(src, dst)
    back = read_density_map(tmp_path / "m.map.gz")
    assert np.array_equal(back.values, small.values)


def test_permuted_axes_and_start_indices(small, tmp_path):
    # stored as (z, x, y): MAPC = 3, MAPR = 1, MAPS = 2; start index 2 along the stored columns (z)
    stored = np.transpose(small.values, (2, 0, 1))
    path = tmp_path / "p.ccp4"
    _raw_map(
        path,
        stored,
        axes=(3, 1, 2),
        cell=(7.0, 7.5, 8.0, 90, 90, 90),
        sampling=(7, 5, 4),
        starts=(2, 0, 0),
    )
    back = read_density_map(path)
    assert np.array_equal(back.values, small.values)
    assert np.allclose(back.voxel_A, (1.0, 1.5, 2.0))
    assert np.allclose(back.origin_A, (0.0, 0.0, 2 * 2.0))


def test_trilinear_sampling_and_nan_outside(small):
    v = small.values
    mid = small.origin_A + np.array([0.5, 0.0, 0.0]) * small.voxel_A
    got = small.sample([small.origin_A, mid, small.origin_A - 1.0])
    assert got[0] == pytest.approx(v[0, 0, 0])
    assert got[1] == pytest.approx((v[0, 0, 0] + v[1, 0, 0]) / 2, rel=1e-6)
    assert np.isnan(got[2])


def test_nan_values_are_an_error(tmp_path):
    values = np.ones((4, 4, 4), dtype=np.float32)
    values[1, 2, 3] = np.nan
    path = tmp_path / "nan.mrc"
    _raw_map(path, values)
    with pytest.raises(InputError, match="1 non-finite values"):
        read_density_map(path)


def test_zero_voxel_size_is_an_error(tmp_path):
    path = tmp_path / "zero.mrc"
    _raw_map(path, np.ones((4, 4, 4)), cell=(0.0, 10.0, 10.0, 90, 90, 90))
    with pytest.raises(InputError, match="voxel size"):
        read_density_map(path)


def test_bad_axis_order_and_skewed_cell(tmp_path):
    path = tmp_path / "axes.mrc"
    _raw_map(path, np.ones((4, 4, 4)), axes=(1, 1, 3))
    with pytest.raises(InputError, match="axis order|MAPC/MAPR/MAPS"):
        read_density_map(path)
    path = tmp_path / "skew.mrc"
    _raw_map(path, np.ones((4, 4, 4)), cell=(10.0, 10.0, 10.0, 90, 100, 90))
    with pytest.raises(InputError, match="not 90 degrees"):
        read_density_map(path)


def test_not_a_map_and_wrong_suffix(tmp_path):
    path = tmp_path / "text.map"
    path.write_text("ATOM      1  CA  ALA A   1       0.000   0.000   0.000\n")
    with pytest.raises(InputError, match="cannot read"):
        read_density_map(path)
    with pytest.raises(InputError, match="must end in"):
        read_density_map(tmp_path / "x.pdb")
    with pytest.raises(InputError, match="does not exist"):
        read_density_map(tmp_path / "absent.mrc")


def test_start_and_origin_both_set_warns(small, tmp_path):
    path = tmp_path / "both.mrc"
    _raw_map(path, np.ones((4, 4, 4)) + np.arange(4)[:, None, None], starts=(1, 0, 0))
    ccp4 = gemmi.read_ccp4_map(str(path))
    ccp4.set_header_float(50, 5.0)
    ccp4.write_ccp4_map(str(path))
    with pytest.warns(QualityWarning, match="ORIGIN"):
        back = read_density_map(path)
    assert back.origin_A[0] == pytest.approx(1 * 10 / 4 + 5.0)


def test_array_checks():
    with pytest.raises(InputError, match="3-D"):
        density_map_from_array(np.ones((4, 4)), voxel_A=1.0)
    with pytest.raises(InputError, match="voxel size"):
        density_map_from_array(np.ones((4, 4, 4)), voxel_A=0.0)
    with pytest.raises(InputError, match="flat"):
        density_map_from_array(np.ones((4, 4, 4)), voxel_A=1.0)
