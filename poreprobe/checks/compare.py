"""Compare the pores of two or more models on one axial frame.

Method
------
1. **Align.** Every model is superposed (least squares, :mod:`poreprobe.geometry.superpose`)
   onto the first one, the reference, on matched atoms: those of a user
   reference selection (matched by chain, residue number, insertion code and
   atom name), by default every polymer CA present in both models. Choose the
   reference selection from a part that does not move between the models (for
   two gating states, e.g. the selectivity filter or the transmembrane core).
2. **One frame.** The reference's pore axis (found or given) serves every
   model, so s means the same thing for all of them. Each model's own pore axis
   is also found, after the alignment, and its angle to and distance from the
   common axis are reported (with a :class:`QualityWarning` beyond 10 degrees or
   2 Å, where a common axis may cut across a pore).
3. **Profile.** Every model is profiled along the common axis on the same planes
   (``s_range_A`` covering all models, the same step), so the difference profile
   ``radius_k(s) - radius_ref(s)`` is taken plane by plane (NaN where either is
   open).
4. **Constriction shifts.** Each constriction of the reference
   (:mod:`poreprobe.geometry.lining`) is matched to the nearest local minimum of each
   model's profile within ``match_window_A`` (default 3 Å): its axial shift
   ``delta_s_A`` and radius change ``delta_radius_A``. The radius change at the
   reference's level, ``delta_radius_at_level_A``, is given too.

The results are model-based estimates; differences smaller than the coordinate
error of the models (a few tenths of an Å at best) mean little.
"""

from __future__ import annotations

import warnings
from collections.abc import Sequence
from dataclasses import dataclass, field, replace

import numpy as np

from poreprobe._validate import check_positive
from poreprobe._version import __version__
from poreprobe.errors import InputError, QualityWarning
from poreprobe.geometry.axis import PoreAxis, find_pore_axis
from poreprobe.geometry.lining import (
    CONSTRICTION_RADIUS_A,
    MIN_PROMINENCE_A,
    find_constrictions,
    pore_lining,
)
from poreprobe.geometry.profile import RadiusProfile, radius_profile
from poreprobe.geometry.superpose import RigidTransform, superpose
from poreprobe.io.cleaning import select_indices
from poreprobe.io.export import to_csv
from poreprobe.io.radii import RadiusSet, atom_radii_A, get_radius_set
from poreprobe.io.structure import Atoms

MATCH_WINDOW_A = 3.0
AXIS_ANGLE_WARN_DEG = 10.0
AXIS_OFFSET_WARN_A = 2.0


@dataclass(frozen=True)
class AlignedModel:
    """One model after alignment onto the reference.

    Attributes
    ----------
    label : str
        Name used in reports (file name, made unique).
    transform : RigidTransform
        Carries the model's coordinates onto the reference frame.
    own_axis_angle_deg : float
        Angle between the model's own pore axis and the common axis (degrees).
    own_axis_offset_A : float
        Distance of the model's own axis from the common axis point, across the
        axis (Å).
    min_radius_A, min_s_A : float
        Narrowest point on the common axis (Å).
    """

    label: str
    transform: RigidTransform
    own_axis_angle_deg: float
    own_axis_offset_A: float
    min_radius_A: float
    min_s_A: float

    def to_dict(self) -> dict:
        return {
            "label": self.label,
            "fit_rmsd_A": self.transform.rmsd_A,
            "n_fit_atoms": self.transform.n_points,
            "own_axis_angle_deg": self.own_axis_angle_deg,
            "own_axis_offset_A": self.own_axis_offset_A,
            "min_radius_A": self.min_radius_A,
            "min_s_A": self.min_s_A,
            "transform": self.transform.to_dict(),
        }


@dataclass(frozen=True)
class ConstrictionShift:
    """How one reference constriction moved in one model.

    Attributes
    ----------
    model : str
        Label of the model.
    reference_s_A, reference_radius_A : float
        The reference constriction (Å).
    lined_by : str
        What lines it in the reference (``"ring of 4 x LEU 12 side chains"``).
    s_A, radius_A : float or None
        The matched minimum in the model (None if none within the window).
    delta_s_A, delta_radius_A : float or None
        Model minus reference.
    delta_radius_at_level_A : float or None
        Model radius minus reference radius at the reference's s (None if open).
    """

    model: str
    reference_s_A: float
    reference_radius_A: float
    lined_by: str
    s_A: float | None
    radius_A: float | None
    delta_s_A: float | None
    delta_radius_A: float | None
    delta_radius_at_level_A: float | None

    def to_dict(self) -> dict:
        return dict(self.__dict__)


@dataclass(frozen=True)
class ModelComparison:
    """Pore profiles of several models on one axial frame.

    Attributes
    ----------
    s_A : ndarray of shape (n_planes,)
        Common plane positions (Å).
    radius_A : ndarray of shape (n_models, n_planes)
        Profile radius of each model (Å; NaN where open). Row 0 is the reference.
    difference_A : ndarray of shape (n_models, n_planes)
        ``radius_A[k] - radius_A[0]`` (Å).
    axis : PoreAxis
        The common axis, in the reference's coordinates.
    models : tuple of AlignedModel
    shifts : tuple of ConstrictionShift
        One per (reference constriction, other model).
    reference_selection : str or None
    radius_set : str
    step_A : float
    version : str
    """

    s_A: np.ndarray
    radius_A: np.ndarray
    difference_A: np.ndarray
    axis: PoreAxis
    models: tuple[AlignedModel, ...]
    shifts: tuple[ConstrictionShift, ...]
    reference_selection: str | None
    radius_set: str
    step_A: float
    version: str = field(default=__version__)

    def __post_init__(self):
        for name in ("s_A", "radius_A", "difference_A"):
            getattr(self, name).setflags(write=False)

    @property
    def labels(self) -> tuple[str, ...]:
        return tuple(m.label for m in self.models)

    def difference_at(self, model: int, s_A: float) -> float:
        """Radius difference of model ``model`` at the plane nearest ``s_A`` (Å)."""
        k = int(np.argmin(np.abs(self.s_A - float(s_A))))
        return float(self.difference_A[model, k])

    def to_dict(self) -> dict:
        def clean(arr):
            arr = np.asarray(arr, dtype=float)
            return [None if not np.isfinite(v) else float(v) for v in arr]

        return {
            "version": self.version,
            "caveat": "model-based estimates, not measurements",
            "reference": self.models[0].label,
            "reference_selection": self.reference_selection,
            "radius_set": self.radius_set,
            "step_A": self.step_A,
            "axis": self.axis.to_dict(),
            "models": [m.to_dict() for m in self.models],
            "profile": {
                "s_A": clean(self.s_A),
                "radius_A": {
                    m.label: clean(r) for m, r in zip(self.models, self.radius_A, strict=True)
                },
                "difference_A": {
                    m.label: clean(d) for m, d in zip(self.models, self.difference_A, strict=True)
                },
            },
            "constriction_shifts": [s.to_dict() for s in self.shifts],
        }

    def to_csv(self, path=None) -> str:
        """CSV: s, each model's radius, each model's difference from the reference (Å)."""
        header = (
            ["s_A"]
            + [f"radius_A[{m}]" for m in self.labels]
            + [f"difference_A[{m}]" for m in self.labels[1:]]
        )
        rows = (
            [float(s), *map(float, self.radius_A[:, k]), *map(float, self.difference_A[1:, k])]
            for k, s in enumerate(self.s_A)
        )
        comments = (
            f"poreprobe {self.version} comparison; reference {self.labels[0]}; "
            f"radius set {self.radius_set}; model-based estimates; lengths in Å",
        )
        return to_csv(header, rows, path, comments)


def _unique_labels(models: Sequence[Atoms], labels) -> list[str]:
    if labels is not None:
        labels = [str(x) for x in labels]
        if len(labels) != len(models):
            raise InputError(f"labels must have {len(models)} entries, got {len(labels)}")
    else:
        labels = [m.source or f"model {k + 1}" for k, m in enumerate(models)]
    seen: dict[str, int] = {}
    out = []
    for lab in labels:
        seen[lab] = seen.get(lab, 0) + 1
        out.append(lab if seen[lab] == 1 else f"{lab}#{seen[lab]}")
    return out


def _fit_keys(atoms: Atoms, selection: str | None) -> dict[tuple, int]:
    if selection is None:
        idx = np.flatnonzero((atoms.kind == "polymer") & (atoms.name == "CA"))
    else:
        idx = select_indices(atoms, selection)
    keys = zip(
        atoms.chain[idx].tolist(),
        atoms.resid[idx].tolist(),
        atoms.icode[idx].tolist(),
        atoms.name[idx].tolist(),
        strict=True,
    )
    out: dict[tuple, int] = {}
    for key, i in zip(keys, idx.tolist(), strict=True):
        out.setdefault(key, i)
    return out


def align_model(
    model: Atoms, reference: Atoms, selection: str | None = None
) -> tuple[Atoms, RigidTransform]:
    """Superpose ``model`` onto ``reference`` on matched atoms (see module docstring).

    Returns
    -------
    (Atoms, RigidTransform)
        The moved model and the transform used.

    Raises
    ------
    InputError
        If fewer than 3 atoms match.
    """
    ref_keys = _fit_keys(reference, selection)
    mod_keys = _fit_keys(model, selection)
    common = [k for k in ref_keys if k in mod_keys]
    what = f"selection {selection!r}" if selection else "polymer CA atoms"
    if len(common) < 3:
        raise InputError(
            f"{model.source or 'model'} and {reference.source or 'reference'} "
            f"share {len(common)} atoms of the {what} (matched by chain, residue "
            "number and atom name); at least 3 are needed to align them"
        )
    fit = superpose(
        model.coords_A[[mod_keys[k] for k in common]],
        reference.coords_A[[ref_keys[k] for k in common]],
    )
    return model.with_coords(fit.apply(model.coords_A)), fit


def _match_shift(label, ref_prof, prof, k_ref, lined_by, window, prominence):
    s_ref, r_ref = float(ref_prof.s_A[k_ref]), float(ref_prof.radius_A[k_ref])
    level = prof.radius_A[k_ref]
    at_level = float(level - r_ref) if np.isfinite(level) else None
    minima = find_constrictions(
        prof, constriction_radius_A=prof.max_radius_A, min_prominence_A=prominence
    )
    near = [
        (abs(float(prof.s_A[k]) - s_ref), k)
        for k, _ in minima
        if abs(float(prof.s_A[k]) - s_ref) <= window
    ]
    if not near:
        return ConstrictionShift(label, s_ref, r_ref, lined_by, None, None, None, None, at_level)
    k = min(near)[1]
    s_k, r_k = float(prof.s_A[k]), float(prof.radius_A[k])
    return ConstrictionShift(
        label, s_ref, r_ref, lined_by, s_k, r_k, s_k - s_ref, r_k - r_ref, at_level
    )


def compare_models(
    models: Sequence[Atoms],
    *,
    reference_selection: str | None = None,
    axis: PoreAxis | None = None,
    radii: str | RadiusSet = "bondi",
    step_A: float = 0.2,
    margin_A: float = 2.0,
    max_radius_A: float = 20.0,
    constriction_radius_A: float = CONSTRICTION_RADIUS_A,
    min_prominence_A: float = MIN_PROMINENCE_A,
    match_window_A: float = MATCH_WINDOW_A,
    labels=None,
) -> ModelComparison:
    """Profile two or more models on one axial frame and report their differences.

    Parameters
    ----------
    models : sequence of Atoms
        Two or more models; the first is the reference.
    reference_selection : str, optional
        MDAnalysis selection of the atoms to superpose on (default: polymer CA
        atoms common to the models).
    axis : PoreAxis, optional
        Common axis in the reference's coordinates (default: found on the reference).
    radii : str or RadiusSet
        Radius set (default ``"bondi"``).
    step_A, margin_A, max_radius_A : float
        Profile settings (see :func:`poreprobe.radius_profile`).
    constriction_radius_A, min_prominence_A : float
        Which reference minima count as constrictions (see :mod:`poreprobe.geometry.lining`).
    match_window_A : float
        Largest axial distance to match a model's minimum to a reference
        constriction (Å).
    labels : sequence of str, optional
        Names of the models (default: their source file names).

    Returns
    -------
    ModelComparison

    Raises
    ------
    InputError
        Fewer than two models, too few matched atoms, bad settings.
    """
    models = list(models)
    if len(models) < 2:
        raise InputError(f"compare needs at least two models, got {len(models)}")
    for k, m in enumerate(models):
        if not isinstance(m, Atoms):
            raise InputError(f"models[{k}] must be an Atoms table, got {type(m).__name__}")
    step_A = check_positive(step_A, "step_A")
    margin_A = check_positive(margin_A, "margin_A", allow_zero=True)
    window = check_positive(match_window_A, "match_window_A")
    rset = get_radius_set(radii)
    names = _unique_labels(models, labels)
    reference = models[0]
    aligned = [reference]
    fits = [RigidTransform(np.eye(3), np.zeros(3), 0.0, 0)]  # the reference stays put
    for m in models[1:]:
        moved, fit = align_model(m, reference, reference_selection)
        aligned.append(moved)
        fits.append(fit)
    radii_per_model = [atom_radii_A(m, rset) for m in aligned]
    if axis is None:
        axis = find_pore_axis(reference, radii_A=radii_per_model[0])
    s_lo = min(float(axis.s_A(m.coords_A).min()) for m in aligned) - margin_A
    s_hi = max(float(axis.s_A(m.coords_A).max()) for m in aligned) + margin_A
    profiles: list[RadiusProfile] = []
    for m, r in zip(aligned, radii_per_model, strict=True):
        prof = radius_profile(
            m, axis, radii_A=r, step_A=step_A, max_radius_A=max_radius_A, s_range_A=(s_lo, s_hi)
        )
        profiles.append(replace(prof, radius_set=rset.name))
    radius = np.array([p.radius_A for p in profiles])
    difference = radius - radius[0]

    info = []
    for k, (m, r, prof, fit) in enumerate(
        zip(aligned, radii_per_model, profiles, fits, strict=True)
    ):
        if k == 0:
            angle, offset = 0.0, 0.0
        else:
            own = find_pore_axis(m, radii_A=r)
            angle = float(np.degrees(np.arccos(min(abs(own.direction @ axis.direction), 1.0))))
            rel = own.point_A - axis.point_A
            offset = float(np.linalg.norm(rel - (rel @ axis.direction) * axis.direction))
            if angle > AXIS_ANGLE_WARN_DEG or offset > AXIS_OFFSET_WARN_A:
                warnings.warn(
                    f"{names[k]}: its own pore axis is {angle:.1f} degrees and "
                    f"{offset:.1f} Å away from the common axis after alignment; "
                    "check the reference selection",
                    QualityWarning,
                    stacklevel=2,
                )
        info.append(
            AlignedModel(
                names[k], fit, angle, offset, float(prof.min_radius_A), float(prof.min_s_A)
            )
        )

    lining = pore_lining(
        aligned[0],
        profiles[0],
        radii_A=radii_per_model[0],
        constriction_radius_A=constriction_radius_A,
        min_prominence_A=min_prominence_A,
    )
    shifts = []
    for con in lining.constrictions:
        k_ref = int(np.argmin(np.abs(profiles[0].s_A - con.s_A)))
        lined_by = "; ".join(g.text for g in con.groups)
        for k in range(1, len(aligned)):
            shifts.append(
                _match_shift(
                    names[k], profiles[0], profiles[k], k_ref, lined_by, window, min_prominence_A
                )
            )
    return ModelComparison(
        s_A=profiles[0].s_A.copy(),
        radius_A=radius,
        difference_A=difference,
        axis=axis,
        models=tuple(info),
        shifts=tuple(shifts),
        reference_selection=reference_selection,
        radius_set=rset.name,
        step_A=step_A,
    )
