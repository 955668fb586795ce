"""Inverse analysis: where the resistance lies, from measured conductances.

A model-based estimate beside the forward model of :mod:`poreprobe.bench.conductance`.

Inverse analysis
----------------
From conductances measured in control (G0), with the entry side's resistivity raised
by a factor f_e (G_e) and with the far side's raised by f_f (G_f), the three-resistor
series model (entry side R_e, unaffected middle R_m, far side R_f)::

    1/G0 = R_e + R_m + R_f,   1/G_e = f_e R_e + R_m + R_f,   1/G_f = R_e + R_m + f_f R_f

is solved exactly: ``R_e = (1/G_e - 1/G0) / (f_e - 1)``, ``R_f = (1/G_f - 1/G0) /
(f_f - 1)``, ``R_m = 1/G0 - R_e - R_f``. Uncertainties are propagated to first order
(delta method) from independent SDs of the three conductances; they grow as
``1 / |f - 1|`` when a factor approaches 1.

Energetics aside
----------------
A conductance ratio is often quoted as a free-energy difference: ``ln(G1 / G2)`` in
units of kT. If each conductance scales as ``exp(-ΔG / kT)`` with a barrier ΔG (rate
theory; common practice), channel 1's barrier is lower than channel 2's by that amount.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
from scipy import constants

from poreprobe._validate import check_finite, check_positive
from poreprobe._version import __version__
from poreprobe.bench.conductance import ConductanceEstimate
from poreprobe.errors import InputError, QualityWarning


# --------------------------------------------------------------------------- inverse analysis
@dataclass(frozen=True)
class SideResistanceSplit:
    """Three-resistor split (entry side, unaffected middle, far side) from measurements.

    Attributes
    ----------
    conductances_pS : (float, float, float)
        Measured G0 (control), G_e (entry side raised), G_f (far side raised).
    conductance_sd_pS : (float, float, float)
    factor_entry, factor_far : float
        Resistivity factors applied on each side.
    resistance_Gohm : dict
        ``{"entry": R_e, "middle": R_m, "far": R_f, "total": 1/G0}``.
    resistance_sd_Gohm : dict
        First-order SDs of the same.
    share_percent, share_sd_percent : dict
        ``R_x / (1/G0)`` in percent and its SD (``entry``, ``middle``, ``far``).
    ln_ratio_kT : dict
        ``{"entry": ln(G0/G_e), "far": ln(G0/G_f)}`` (see :func:`ratio_free_energy`).
    ln_ratio_sd_kT : dict
    prediction : dict or None
        The forward model's split for the structure, if one was given.
    """

    conductances_pS: tuple[float, float, float]
    conductance_sd_pS: tuple[float, float, float]
    factor_entry: float
    factor_far: float
    resistance_Gohm: dict
    resistance_sd_Gohm: dict
    share_percent: dict
    share_sd_percent: dict
    ln_ratio_kT: dict
    ln_ratio_sd_kT: dict
    prediction: dict | None = None
    version: str = field(default=__version__)

    def to_dict(self) -> dict:
        out = dict(self.__dict__)
        out["conductances_pS"] = dict(
            zip(("control", "entry_raised", "far_raised"), self.conductances_pS, strict=True)
        )
        out["conductance_sd_pS"] = dict(
            zip(("control", "entry_raised", "far_raised"), self.conductance_sd_pS, strict=True)
        )
        out["model"] = (
            "three resistors in series; R_e = (1/G_e - 1/G0)/(f_e - 1), "
            "R_f = (1/G_f - 1/G0)/(f_f - 1), R_m = 1/G0 - R_e - R_f; "
            "first-order error propagation"
        )
        out["segments"] = [
            {
                "name": f"{key} side" if key != "middle" else "middle",
                "resistance_Gohm": self.resistance_Gohm[key],
                "resistance_sd_Gohm": self.resistance_sd_Gohm[key],
                "share_percent": self.share_percent[key],
                "share_sd_percent": self.share_sd_percent[key],
            }
            for key in ("entry", "middle", "far")
        ]
        out["conductance_pS"] = self.conductances_pS[0]
        out["conductance_sd_pS"] = self.conductance_sd_pS[0]
        return out


def _measurement(value, name: str) -> tuple[float, float]:
    if isinstance(value, Sequence) and not isinstance(value, str):
        if len(value) != 2:
            raise InputError(f"{name} must be a value or (value, sd) in pS, got {value!r}")
        g, sd = value
    else:
        g, sd = value, 0.0
    g = check_finite(g, name)
    if g <= 0:
        raise InputError(f"{name} must be a positive conductance (pS), got {g:g}")
    return g, check_positive(sd, f"{name} SD", allow_zero=True)


def _check_factor(value, name: str) -> float:
    f = check_positive(value, name)
    if abs(f - 1.0) < 1e-9:
        raise InputError(
            f"{name} must differ from 1 (no change leaves the split undefined), got {value!r}"
        )
    return f


def split_side_resistances(
    control_pS,
    entry_raised_pS,
    far_raised_pS,
    *,
    factor_entry: float,
    factor_far: float,
    estimate: ConductanceEstimate | None = None,
) -> SideResistanceSplit:
    """Solve the three-resistor series model from measured conductances.

    Parameters
    ----------
    control_pS, entry_raised_pS, far_raised_pS : float or (float, float)
        Conductances (pS, > 0), optionally with their SD: control, with the entry
        side's resistivity raised by ``factor_entry``, and with the far side's raised
        by ``factor_far``. Measurements are taken as independent.
    factor_entry, factor_far : float
        Resistivity factors (> 0, != 1).
    estimate : ConductanceEstimate, optional
        A forward-model estimate for the structure (computed with side factors 1);
        its split and predicted conductances are reported beside the measured split.

    Returns
    -------
    SideResistanceSplit

    Warns
    -----
    QualityWarning
        If a recovered resistance is negative (noise or a model that does not fit).

    Examples
    --------
    >>> res = split_side_resistances(1e3 / 3.0, 1e3 / 4.0, 1e3 / 3.5,
    ...                              factor_entry=2.0, factor_far=2.0)
    >>> [round(res.resistance_Gohm[k], 9) for k in ("entry", "middle", "far")]
    [1.0, 1.5, 0.5]
    """
    g = np.empty(3)
    sd = np.empty(3)
    for i, (value, name) in enumerate(
        (
            (control_pS, "control conductance"),
            (entry_raised_pS, "entry-raised conductance"),
            (far_raised_pS, "far-raised conductance"),
        )
    ):
        g[i], sd[i] = _measurement(value, name)
    fe = _check_factor(factor_entry, "factor_entry")
    ff = _check_factor(factor_far, "factor_far")
    r = 1e3 / g  # GOhm
    var_r = (1e3 * sd / g**2) ** 2
    # outputs linear in r: rows entry, middle, far, total
    j_entry = np.array([-1.0, 1.0, 0.0]) / (fe - 1.0)
    j_far = np.array([-1.0, 0.0, 1.0]) / (ff - 1.0)
    j_total = np.array([1.0, 0.0, 0.0])
    jac = np.stack([j_entry, j_total - j_entry - j_far, j_far, j_total])
    values = jac @ r
    cov = jac @ np.diag(var_r) @ jac.T
    keys = ("entry", "middle", "far", "total")
    res = dict(zip(keys, values.tolist(), strict=True))
    res_sd = dict(zip(keys, np.sqrt(np.diag(cov)).tolist(), strict=True))
    share_jac = jac[:3] / values[3] - np.outer(values[:3], j_total) / values[3] ** 2
    share_cov = share_jac @ np.diag(var_r) @ share_jac.T
    share = dict(zip(keys[:3], (100 * values[:3] / values[3]).tolist(), strict=True))
    share_sd = dict(zip(keys[:3], (100 * np.sqrt(np.diag(share_cov))).tolist(), strict=True))
    negative = [k for k in keys[:3] if res[k] < 0]
    if negative:
        warnings.warn(
            f"negative resistance recovered for {', '.join(negative)}: the "
            "measurements do not fit the three-resistor model within their noise",
            QualityWarning,
            stacklevel=2,
        )
    ln_e = ratio_free_energy(g[0], g[1], sd1_pS=sd[0], sd2_pS=sd[1])
    ln_f = ratio_free_energy(g[0], g[2], sd1_pS=sd[0], sd2_pS=sd[2])
    prediction = None
    if estimate is not None:
        if not isinstance(estimate, ConductanceEstimate):
            raise InputError(
                f"estimate must be a ConductanceEstimate, got {type(estimate).__name__}"
            )
        parts = estimate.by_side_Gohm()
        total = estimate.resistance_Gohm
        prediction = {
            "resistance_Gohm": {
                "entry": parts["entry"],
                "middle": parts["neither"],
                "far": parts["far"],
                "total": total,
            },
            "share_percent": {
                "entry": 100 * parts["entry"] / total,
                "middle": 100 * parts["neither"] / total,
                "far": 100 * parts["far"] / total,
            },
            "conductances_pS": {
                "control": estimate.conductance_pS,
                "entry_raised": estimate.predicted_conductance_pS(fe, 1.0),
                "far_raised": estimate.predicted_conductance_pS(1.0, ff),
            },
            "note": "forward model estimate for the structure (not a measurement)",
        }
    return SideResistanceSplit(
        conductances_pS=tuple(g.tolist()),
        conductance_sd_pS=tuple(sd.tolist()),
        factor_entry=fe,
        factor_far=ff,
        resistance_Gohm=res,
        resistance_sd_Gohm=res_sd,
        share_percent=share,
        share_sd_percent=share_sd,
        ln_ratio_kT={"entry": ln_e.ln_ratio, "far": ln_f.ln_ratio},
        ln_ratio_sd_kT={"entry": ln_e.ln_ratio_sd, "far": ln_f.ln_ratio_sd},
        prediction=prediction,
    )


# --------------------------------------------------------------------------- energetics
@dataclass(frozen=True)
class RatioFreeEnergy:
    """A conductance ratio as a free-energy difference.

    Attributes
    ----------
    ratio : float
        ``G1 / G2``.
    ln_ratio : float
        ``ln(G1 / G2)``, in units of kT.
    ln_ratio_sd : float
        First-order SD from independent SDs of G1 and G2.
    kJ_per_mol : float
        ``ln_ratio × R T`` in kJ/mol at ``temperature_K``.
    temperature_K : float
    """

    ratio: float
    ln_ratio: float
    ln_ratio_sd: float
    kJ_per_mol: float
    temperature_K: float

    def to_dict(self) -> dict:
        return dict(self.__dict__)


def ratio_free_energy(
    g1_pS: float,
    g2_pS: float,
    *,
    sd1_pS: float = 0.0,
    sd2_pS: float = 0.0,
    temperature_K: float = 298.15,
) -> RatioFreeEnergy:
    """``ln(G1 / G2)`` in kT (and kJ/mol): the energetics aside of the module docstring.

    Examples
    --------
    >>> round(ratio_free_energy(200.0, 100.0).ln_ratio, 6)
    0.693147
    """
    g1 = check_positive(g1_pS, "g1_pS")
    g2 = check_positive(g2_pS, "g2_pS")
    s1 = check_positive(sd1_pS, "sd1_pS", allow_zero=True)
    s2 = check_positive(sd2_pS, "sd2_pS", allow_zero=True)
    t = check_positive(temperature_K, "temperature_K")
    ln = math.log(g1 / g2)
    return RatioFreeEnergy(
        g1 / g2, ln, math.hypot(s1 / g1, s2 / g2), ln * constants.R * t / 1000.0, t
    )
