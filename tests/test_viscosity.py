"""Water and viscogen viscosity tables, and Stokes-Einstein scaling of D."""

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from poreprobe.bench.ions import get_ion
from poreprobe.bench.viscosity import (
    VISCOGENS,
    WATER_VISCOSITY_TABLE,
    diffusion_coefficient,
    stokes_einstein_diffusion_m2_per_s,
    viscogen_relative_viscosity,
    viscogen_viscosity_mPa_s,
    water_viscosity_mPa_s,
)
from poreprobe.errors import InputError

# --- water --------------------------------------------------------------------------


def test_water_table_points_reproduced():
    for t, eta in WATER_VISCOSITY_TABLE:
        assert water_viscosity_mPa_s(t) == pytest.approx(eta, rel=1e-12)


def test_water_reference_points():
    # CRC Handbook 102nd ed., Concentrative properties of aqueous solutions, header
    # note: water 1.002 mPa s at 20 °C (REFERENCE_VALUES §4, seen).
    assert water_viscosity_mPa_s(20.0) == pytest.approx(1.002, abs=5e-4)
    # CRC Handbook 87th ed.: 0.890 mPa s at 25 °C (REFERENCE_VALUES §4, seen).
    assert water_viscosity_mPa_s(25.0) == pytest.approx(0.890, abs=5e-4)
    # IAPWS 2008 (Huber et al. 2009, J. Phys. Chem. Ref. Data 38:101): 1.0016 / 0.8900
    # mPa s at 20 / 25 °C -- values from memory (REFERENCE_VALUES §4 marks them so).
    assert water_viscosity_mPa_s(20.0) == pytest.approx(1.0016, rel=1e-3)
    assert water_viscosity_mPa_s(25.0) == pytest.approx(0.8900, rel=1e-3)


@pytest.mark.parametrize(
    "t_C, eta_ict",
    [(5, 1.5188), (15, 1.1447), (22, 0.9608), (28, 0.8363), (33, 0.7511), (37, 0.6925)],
)
def test_water_interpolation_between_points(t_C, eta_ict):
    # International Critical Tables (1928-29), as tabulated in the Encyclopedia of
    # Environmental Science and Engineering, Appendix Table 2 ("Viscosity and density
    # of water calculated from international critical tables"). These older values run
    # up to ~0.7 % above modern ones (1.0087 vs 1.002 at 20 °C), hence the 1 % tolerance.
    assert water_viscosity_mPa_s(t_C) == pytest.approx(eta_ict, rel=0.01)


def test_water_viscosity_monotonic_decreasing():
    t = np.linspace(0.0, 40.0, 801)
    eta = np.array([water_viscosity_mPa_s(x) for x in t])
    assert (np.diff(eta) < 0).all()


@pytest.mark.parametrize("t_C", [-0.1, 40.1, 60.0, float("nan")])
def test_water_viscosity_out_of_range(t_C):
    with pytest.raises(InputError, match="temperature_C"):
        water_viscosity_mPa_s(t_C)


# --- viscogens ----------------------------------------------------------------------


@pytest.mark.parametrize(
    "percent, eta",
    [
        (10, 1.336),
        (20, 1.945),
        (30, 3.187),
        (32, 3.762),
        (40, 6.162),
        (50, 15.431),
        (60, 58.487),
        (70, 481.561),
    ],
)
def test_sucrose_crc_points(percent, eta):
    # CRC Handbook 102nd ed. (2021), Concentrative properties of aqueous solutions,
    # sucrose at 20 °C (REFERENCE_VALUES §4, seen).
    assert viscogen_viscosity_mPa_s("sucrose", percent) == pytest.approx(eta, rel=1e-12)


@pytest.mark.parametrize("name", sorted(VISCOGENS))
def test_viscogen_tables_reproduced_and_monotonic(name):
    table = VISCOGENS[name]
    for w, eta in zip(table.percent_w_w, table.viscosity_mPa_s, strict=True):
        assert viscogen_viscosity_mPa_s(name, w) == pytest.approx(eta, rel=1e-12)
    grid = np.linspace(0.0, table.max_percent_w_w, 2001)
    eta = np.array([viscogen_viscosity_mPa_s(name, w) for w in grid])
    assert (np.diff(eta) > 0).all()
    assert viscogen_relative_viscosity(name, 0.0) == pytest.approx(1.0, rel=1e-12)


def test_glycerol_half_by_mass():
    # Glycerol 50 % w/w at 20 °C is about 6.0 mPa s (Segur & Oberstar 1951, Ind. Eng.
    # Chem. 43:2117 -- value and citation from memory); the CRC table brackets it with
    # 5.45 (48 %) and 6.73 (52 %).
    assert viscogen_viscosity_mPa_s("glycerol", 50.0) == pytest.approx(6.0, rel=0.03)


def test_sucrose_relative_viscosity_20_percent():
    # CRC (REFERENCE_VALUES §4): 1.945 / 1.002 mPa s at 20 °C.
    assert viscogen_relative_viscosity("sucrose", 20) == pytest.approx(1.945 / 1.002, rel=1e-12)


@pytest.mark.parametrize(
    "name, percent", [("sucrose", 71.0), ("sucrose", -1.0), ("glycerol", 101.0), ("honey", 10.0)]
)
def test_viscogen_bad_input(name, percent):
    with pytest.raises(InputError):
        viscogen_viscosity_mPa_s(name, percent)


# --- Stokes-Einstein -----------------------------------------------------------------


def test_scaling_identity_at_reference():
    k = get_ion("K")
    est = diffusion_coefficient("K", temperature_C=25.0)
    assert est.diffusion_m2_per_s == pytest.approx(k.diffusion_m2_per_s, rel=1e-12)
    assert est.method == "stokes-einstein"


@given(rel=st.floats(0.2, 50.0), t_C=st.floats(0.0, 40.0))
def test_scaling_follows_t_over_eta(rel, t_C):
    d25 = get_ion("Na").diffusion_m2_per_s
    est = diffusion_coefficient("Na", temperature_C=t_C, relative_viscosity=rel)
    t_K = t_C + 273.15
    expected = d25 * (t_K / 298.15) * 0.890 / (rel * water_viscosity_mPa_s(t_C))
    assert est.diffusion_m2_per_s == pytest.approx(expected, rel=1e-12)
    plain = diffusion_coefficient("Na", temperature_C=t_C)
    assert est.diffusion_m2_per_s * rel == pytest.approx(plain.diffusion_m2_per_s, rel=1e-12)


def test_stokes_einstein_function_explicit_reference():
    d = stokes_einstein_diffusion_m2_per_s(
        2e-9,
        temperature_K=300.0,
        viscosity_mPa_s=2.0,
        reference_temperature_K=250.0,
        reference_viscosity_mPa_s=1.0,
    )
    assert d == pytest.approx(2e-9 * (300 / 250) * (1 / 2), rel=1e-14)


def test_viscogen_sets_relative_viscosity():
    est = diffusion_coefficient(
        "K", temperature_C=20.0, viscogen="sucrose", viscogen_percent_w_w=20.0
    )
    assert est.relative_viscosity == pytest.approx(1.945 / 1.002, rel=1e-12)
    assert est.viscogen == "sucrose"
    assert any("temperature-independent" in n for n in est.notes)


def test_relative_viscosity_sd_propagates():
    est = diffusion_coefficient("K", relative_viscosity=2.0, relative_viscosity_sd=0.2)
    assert est.diffusion_sd_m2_per_s == pytest.approx(0.1 * est.diffusion_m2_per_s, rel=1e-12)


def test_explicit_diffusion_used_as_is_outside_table():
    est = diffusion_coefficient(
        None, temperature_C=45.0, diffusion_m2_per_s=1.5e-9, diffusion_sd_m2_per_s=1e-10
    )
    assert est.diffusion_m2_per_s == 1.5e-9 and est.diffusion_sd_m2_per_s == 1e-10
    assert est.method == "explicit"
    assert est.to_dict()["water_viscosity_mPa_s"] is None


@pytest.mark.parametrize(
    "kwargs, message",
    [
        ({"temperature_C": 45.0}, "outside the water-viscosity table"),
        ({"relative_viscosity": 0.0}, "relative_viscosity"),
        ({"relative_viscosity": -2.0}, "relative_viscosity"),
        (
            {"relative_viscosity": 2.0, "viscogen": "sucrose", "viscogen_percent_w_w": 10},
            "not both",
        ),
        ({"viscogen": "sucrose"}, "viscogen_percent_w_w"),
        ({"viscogen_percent_w_w": 10.0}, "needs a viscogen"),
        ({"diffusion_m2_per_s": 1e-9, "relative_viscosity": 2.0}, "used as is"),
        ({"diffusion_m2_per_s": 0.0}, "diffusion_m2_per_s"),
        ({"diffusion_sd_m2_per_s": 1e-10}, "explicit"),
        ({"temperature_C": -300.0}, "absolute zero"),
    ],
)
def test_diffusion_coefficient_bad_input(kwargs, message):
    with pytest.raises(InputError, match=message):
        diffusion_coefficient("K", **kwargs)


def test_unknown_ion():
    with pytest.raises(InputError, match="unknown ion"):
        diffusion_coefficient("Xx")
