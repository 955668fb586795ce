"""Viscosity of water and of viscogen solutions, and Stokes-Einstein scaling of D.

A tracer diffusion coefficient measured at 25 °C in water is carried to another
temperature T and a more viscous solution with the Stokes-Einstein relation
``D = k_B T / (6 π η r)`` at fixed hydrodynamic radius r:

    D(T, η) = D(25 °C) · (T / 298.15 K) · η_water(25 °C) / η

where η = η_rel · η_water(T) and η_rel is the solution's viscosity relative to
water. This is an estimate: Stokes-Einstein holds only roughly for small ions,
and a viscogen's relative viscosity is taken from its 20 °C table at every
temperature.

Tables (all values as printed in their source)
----------------------------------------------
* Water, 0-40 °C (mPa s): 0 °C 1.792, 10 °C 1.307, 20 °C 1.002, 30 °C 0.797,
  40 °C 0.653 from M. Chaplin, "Water structure and science", London South Bank
  University, data table at http://www1.lsbu.ac.uk/water/data1.html; 25 °C 0.890
  from the CRC Handbook of Chemistry and Physics (87th ed.); 20 °C 1.002 is also
  the CRC value. Between table points ``ln η`` is interpolated linearly in
  ``1/T`` (the Andrade form, common practice), which is monotonic and
  reproduces every tabulated point.
* Sucrose and glycerol in water, 20 °C, mass percent (mPa s): CRC Handbook of
  Chemistry and Physics, 102nd ed. (2021), "Concentrative properties of aqueous
  solutions" (data from Wolf 1966, Aqueous Solutions and Body Fluids), as
  transcribed in the repository amosonabike/CRC-Solution-Properties-
  (``src/CRC Solution Properties.txt``, commit b43fe5a). The same table gives
  water at 20 °C as 1.002 mPa s, the 0 % point here. Between points ``ln η`` is
  interpolated linearly in mass percent. The sucrose 32 % entry (3.762) sits
  about 5 % above a smooth curve through its neighbours; it is kept as printed.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy import constants

from poreprobe._validate import check_choice, check_finite, check_positive, check_range
from poreprobe._version import __version__
from poreprobe.bench.ions import T_REF_K, Ion, get_ion
from poreprobe.errors import InputError

_WATER_SOURCE = (
    "water viscosity: Chaplin, Water structure and science (LSBU data table) "
    "for 0, 10, 20, 30, 40 °C; CRC Handbook 87th ed. for 25 °C; ln(eta) linear "
    "in 1/T between points"
)
_CRC_CONCENTRATIVE = (
    "CRC Handbook of Chemistry and Physics 102nd ed. (2021), Concentrative "
    "properties of aqueous solutions (Wolf 1966), 20 °C"
)

#: Temperature (°C) and dynamic viscosity (mPa s) of liquid water at 0.1 MPa.
WATER_VISCOSITY_TABLE: tuple[tuple[float, float], ...] = (
    (0.0, 1.792),
    (10.0, 1.307),
    (20.0, 1.002),
    (25.0, 0.890),
    (30.0, 0.797),
    (40.0, 0.653),
)


@dataclass(frozen=True)
class ViscogenTable:
    """Viscosity of an aqueous solution against solute mass percent at one temperature.

    Attributes
    ----------
    name : str
    percent_w_w : ndarray of shape (n,)
        Solute mass percent (0 = pure water), strictly increasing.
    viscosity_mPa_s : ndarray of shape (n,)
        Dynamic viscosity of the solution.
    temperature_C : float
        Temperature of the table.
    source : str
    """

    name: str
    percent_w_w: np.ndarray
    viscosity_mPa_s: np.ndarray
    temperature_C: float
    source: str

    def __post_init__(self):
        for name in ("percent_w_w", "viscosity_mPa_s"):
            getattr(self, name).setflags(write=False)

    @property
    def max_percent_w_w(self) -> float:
        return float(self.percent_w_w[-1])

    def to_dict(self) -> dict:
        return {
            "name": self.name,
            "percent_w_w": self.percent_w_w.tolist(),
            "viscosity_mPa_s": self.viscosity_mPa_s.tolist(),
            "temperature_C": self.temperature_C,
            "source": self.source,
        }


def _table(name: str, rows: list[tuple[float, float]]) -> ViscogenTable:
    arr = np.array([(0.0, 1.002), *rows], dtype=float)
    return ViscogenTable(name, arr[:, 0].copy(), arr[:, 1].copy(), 20.0, _CRC_CONCENTRATIVE)


#: Viscogen tables by name (CRC 102nd ed., 20 °C; see the module docstring).
VISCOGENS: dict[str, ViscogenTable] = {
    "sucrose": _table(
        "sucrose",
        [
            (0.5, 1.015),
            (1, 1.028),
            (2, 1.055),
            (3, 1.084),
            (4, 1.114),
            (5, 1.146),
            (6, 1.179),
            (7, 1.215),
            (8, 1.254),
            (9, 1.294),
            (10, 1.336),
            (11, 1.381),
            (12, 1.429),
            (13, 1.480),
            (14, 1.534),
            (15, 1.592),
            (16, 1.653),
            (17, 1.719),
            (18, 1.790),
            (19, 1.865),
            (20, 1.945),
            (22, 2.124),
            (24, 2.331),
            (26, 2.573),
            (28, 2.855),
            (30, 3.187),
            (32, 3.762),
            (34, 4.052),
            (36, 4.621),
            (38, 5.315),
            (40, 6.162),
            (42, 7.234),
            (44, 8.596),
            (46, 10.301),
            (48, 12.515),
            (50, 15.431),
            (60, 58.487),
            (70, 481.561),
        ],
    ),
    "glycerol": _table(
        "glycerol",
        [
            (0.5, 1.022),
            (1, 1.034),
            (2, 1.060),
            (3, 1.088),
            (4, 1.116),
            (5, 1.145),
            (6, 1.176),
            (7, 1.207),
            (8, 1.240),
            (9, 1.275),
            (10, 1.310),
            (12, 1.386),
            (14, 1.469),
            (16, 1.560),
            (18, 1.658),
            (20, 1.766),
            (24, 2.010),
            (28, 2.320),
            (32, 2.690),
            (36, 3.150),
            (40, 3.730),
            (44, 4.480),
            (48, 5.450),
            (52, 6.730),
            (56, 8.470),
            (60, 10.900),
            (64, 14.300),
            (68, 19.400),
            (72, 27.200),
            (76, 39.600),
            (80, 60.600),
            (84, 98.0),
            (88, 170.0),
            (92, 319.0),
            (96, 648.0),
            (100, 1460.0),
        ],
    ),
}


def water_viscosity_range_C() -> tuple[float, float]:
    """Temperatures (°C) covered by :data:`WATER_VISCOSITY_TABLE`."""
    return WATER_VISCOSITY_TABLE[0][0], WATER_VISCOSITY_TABLE[-1][0]


def water_viscosity_mPa_s(temperature_C: float) -> float:
    """Dynamic viscosity of liquid water (mPa s) at ``temperature_C``.

    Interpolates :data:`WATER_VISCOSITY_TABLE` with ``ln η`` linear in ``1/T``.

    Raises
    ------
    InputError
        If the temperature lies outside the table (0 to 40 °C).
    """
    lo, hi = water_viscosity_range_C()
    t = check_finite(temperature_C, "temperature_C")
    if not lo <= t <= hi:
        raise InputError(
            f"temperature_C={temperature_C!r} is outside the water-viscosity "
            f"table ({lo:g} to {hi:g} °C); give the diffusion coefficient "
            "explicitly"
        )
    table = np.array(WATER_VISCOSITY_TABLE)
    inv_T = 1.0 / (table[:, 0] + constants.zero_Celsius)
    # np.interp needs increasing x: 1/T decreases with T, so reverse.
    ln_eta = np.interp(1.0 / (t + constants.zero_Celsius), inv_T[::-1], np.log(table[::-1, 1]))
    return float(np.exp(ln_eta))


def get_viscogen(name: str) -> ViscogenTable:
    """A viscogen table by name (``"sucrose"``, ``"glycerol"``)."""
    key = check_choice(name, "viscogen", VISCOGENS)
    return VISCOGENS[key]


def viscogen_viscosity_mPa_s(viscogen: str, percent_w_w: float) -> float:
    """Viscosity (mPa s) of the viscogen solution at ``percent_w_w`` (table temperature).

    ``ln η`` is interpolated linearly in mass percent between tabulated points.
    """
    table = get_viscogen(viscogen)
    w = check_range(percent_w_w, "viscogen_percent_w_w", 0.0, table.max_percent_w_w)
    return float(np.exp(np.interp(w, table.percent_w_w, np.log(table.viscosity_mPa_s))))


def viscogen_relative_viscosity(viscogen: str, percent_w_w: float) -> float:
    """Viscosity of the solution relative to water at the table's temperature."""
    table = get_viscogen(viscogen)
    return viscogen_viscosity_mPa_s(viscogen, percent_w_w) / float(table.viscosity_mPa_s[0])


def stokes_einstein_diffusion_m2_per_s(
    reference_diffusion_m2_per_s: float,
    *,
    temperature_K: float,
    viscosity_mPa_s: float,
    reference_temperature_K: float = T_REF_K,
    reference_viscosity_mPa_s: float | None = None,
) -> float:
    """Scale D at fixed hydrodynamic radius: ``D = D_ref (T / T_ref) (η_ref / η)``.

    ``reference_viscosity_mPa_s`` defaults to water at the reference temperature
    from :func:`water_viscosity_mPa_s`.
    """
    d_ref = check_positive(reference_diffusion_m2_per_s, "reference_diffusion_m2_per_s")
    t = check_positive(temperature_K, "temperature_K")
    eta = check_positive(viscosity_mPa_s, "viscosity_mPa_s")
    t_ref = check_positive(reference_temperature_K, "reference_temperature_K")
    if reference_viscosity_mPa_s is None:
        eta_ref = water_viscosity_mPa_s(t_ref - constants.zero_Celsius)
    else:
        eta_ref = check_positive(reference_viscosity_mPa_s, "reference_viscosity_mPa_s")
    return d_ref * (t / t_ref) * (eta_ref / eta)


@dataclass(frozen=True)
class DiffusionEstimate:
    """The diffusion coefficient used for a capture calculation, with its origin.

    Attributes
    ----------
    diffusion_m2_per_s, diffusion_sd_m2_per_s : float
        D and its standard uncertainty (0 when none was given).
    method : str
        ``"explicit"`` (given by the user) or ``"stokes-einstein"`` (the ion
        table's 25 °C value scaled to the temperature and viscosity).
    ion : str or None
        Ion symbol (``"K+"``) when the table was used or an ion was named.
    temperature_C : float
    reference_diffusion_m2_per_s : float or None
        The table's D at 25 °C in water.
    water_viscosity_mPa_s : float or None
        Water at ``temperature_C`` (NaN with an explicit D).
    relative_viscosity, relative_viscosity_sd : float
        Solution viscosity relative to water (1 = plain water).
    viscogen : str or None
    viscogen_percent_w_w : float or None
    notes : tuple of str
        Sources and approximations used.
    """

    diffusion_m2_per_s: float
    diffusion_sd_m2_per_s: float
    method: str
    ion: str | None
    temperature_C: float
    reference_diffusion_m2_per_s: float | None
    water_viscosity_mPa_s: float
    relative_viscosity: float
    relative_viscosity_sd: float
    viscogen: str | None
    viscogen_percent_w_w: float | None
    notes: tuple[str, ...]
    version: str = field(default=__version__)

    @property
    def temperature_K(self) -> float:
        return self.temperature_C + constants.zero_Celsius

    def to_dict(self) -> dict:
        return {
            "version": self.version,
            "diffusion_m2_per_s": self.diffusion_m2_per_s,
            "diffusion_sd_m2_per_s": self.diffusion_sd_m2_per_s,
            "method": self.method,
            "ion": self.ion,
            "temperature_C": self.temperature_C,
            "temperature_K": self.temperature_K,
            "reference_diffusion_m2_per_s": self.reference_diffusion_m2_per_s,
            "water_viscosity_mPa_s": (
                None if math.isnan(self.water_viscosity_mPa_s) else self.water_viscosity_mPa_s
            ),
            "relative_viscosity": self.relative_viscosity,
            "relative_viscosity_sd": self.relative_viscosity_sd,
            "viscogen": self.viscogen,
            "viscogen_percent_w_w": self.viscogen_percent_w_w,
            "notes": list(self.notes),
        }


def diffusion_coefficient(
    ion: str | Ion | None = "K",
    *,
    temperature_C: float = 25.0,
    relative_viscosity: float | None = None,
    relative_viscosity_sd: float = 0.0,
    viscogen: str | None = None,
    viscogen_percent_w_w: float | None = None,
    diffusion_m2_per_s: float | None = None,
    diffusion_sd_m2_per_s: float = 0.0,
) -> DiffusionEstimate:
    """D of an ion at the experiment's temperature and viscosity.

    Either ``diffusion_m2_per_s`` is given and used as is (it must already hold
    for the experiment's solution), or the ion table's 25 °C value
    (:data:`poreprobe.bench.ions.IONS`, CRC) is scaled with the Stokes-Einstein
    relation to ``temperature_C`` (water table, 0-40 °C) and to the solution's
    viscosity: ``relative_viscosity`` (default 1) or a ``viscogen`` at
    ``viscogen_percent_w_w`` (:data:`VISCOGENS`, 20 °C tables).

    Parameters
    ----------
    ion : str, Ion or None
        Ion name (``"K"``, ``"Na+"``, ...); may be None only with an explicit D.
    temperature_C : float
        Experiment temperature (°C).
    relative_viscosity, relative_viscosity_sd : float
        Solution viscosity relative to water at the same temperature (> 0) and
        its standard uncertainty (>= 0), propagated to D to first order.
    viscogen : str, optional
        ``"sucrose"`` or ``"glycerol"`` (instead of ``relative_viscosity``).
    viscogen_percent_w_w : float, optional
        Viscogen mass percent, required with ``viscogen``.
    diffusion_m2_per_s, diffusion_sd_m2_per_s : float, optional
        An explicit D (m² s⁻¹) and its standard uncertainty.

    Returns
    -------
    DiffusionEstimate

    Raises
    ------
    InputError
        Non-positive viscosity or D, unknown ion or viscogen, a temperature
        outside the water table without an explicit D, or conflicting options.
    """
    temp = check_finite(temperature_C, "temperature_C")
    if temp <= -constants.zero_Celsius:
        raise InputError(f"temperature_C must be above absolute zero, got {temperature_C!r}")
    rel_sd = check_positive(relative_viscosity_sd, "relative_viscosity_sd", allow_zero=True)
    ion_obj = get_ion(ion) if isinstance(ion, str) else ion
    symbol = ion_obj.symbol if ion_obj is not None else None
    if viscogen is None and viscogen_percent_w_w is not None:
        raise InputError("viscogen_percent_w_w needs a viscogen (sucrose or glycerol)")
    if viscogen is not None and relative_viscosity is not None:
        raise InputError("give either relative_viscosity or a viscogen, not both")

    if diffusion_m2_per_s is not None:
        d = check_positive(diffusion_m2_per_s, "diffusion_m2_per_s")
        d_sd = check_positive(diffusion_sd_m2_per_s, "diffusion_sd_m2_per_s", allow_zero=True)
        if relative_viscosity is not None or viscogen is not None or rel_sd > 0:
            raise InputError(
                "an explicit diffusion_m2_per_s is used as is: do not combine it "
                "with relative_viscosity or a viscogen (give D for the "
                "experiment's solution instead)"
            )
        return DiffusionEstimate(
            d,
            d_sd,
            "explicit",
            symbol,
            temp,
            None,
            math.nan,
            1.0,
            0.0,
            None,
            None,
            ("diffusion coefficient given explicitly",),
        )

    if diffusion_sd_m2_per_s:
        raise InputError(
            "diffusion_sd_m2_per_s needs an explicit diffusion_m2_per_s; "
            "use relative_viscosity_sd for the uncertainty of a scaled D"
        )
    if ion_obj is None:
        raise InputError("name an ion or give diffusion_m2_per_s explicitly")
    notes = [
        f"D(25 °C, water) of {symbol} from the CRC Handbook ion table",
        "Stokes-Einstein scaling D ~ T / eta (an estimate for small ions)",
        _WATER_SOURCE,
    ]
    percent = None
    if viscogen is not None:
        if viscogen_percent_w_w is None:
            raise InputError("viscogen needs viscogen_percent_w_w (mass percent)")
        table = get_viscogen(viscogen)
        percent = check_range(
            viscogen_percent_w_w, "viscogen_percent_w_w", 0.0, table.max_percent_w_w
        )
        rel = viscogen_relative_viscosity(table.name, percent)
        notes.append(
            f"{table.name} {percent:g} % w/w: relative viscosity from {table.source}, "
            f"taken as temperature-independent"
        )
        viscogen = table.name
    else:
        rel = (
            1.0
            if relative_viscosity is None
            else check_positive(relative_viscosity, "relative_viscosity")
        )
    eta_w = water_viscosity_mPa_s(temp)
    d = stokes_einstein_diffusion_m2_per_s(
        ion_obj.diffusion_m2_per_s,
        temperature_K=temp + constants.zero_Celsius,
        viscosity_mPa_s=rel * eta_w,
    )
    return DiffusionEstimate(
        d,
        d * rel_sd / rel,
        "stokes-einstein",
        symbol,
        temp,
        ion_obj.diffusion_m2_per_s,
        eta_w,
        rel,
        rel_sd,
        viscogen,
        percent,
        tuple(notes),
    )
