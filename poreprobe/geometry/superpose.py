"""Least-squares rigid superposition (Kabsch) and rotations about an axis.

Shared by the pore-axis finder (symmetry of equivalent chains), the symmetry
check of the readiness report and the alignment of models for comparison.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from poreprobe._validate import as_coords_A
from poreprobe.errors import InputError


def kabsch_rotation(mobile: np.ndarray, target: np.ndarray) -> np.ndarray:
    """Rotation R minimising ``|R (mobile - mean) - (target - mean)|`` (no reflection).

    Parameters
    ----------
    mobile, target : ndarray of shape (m, 3)
        Matched points (same order).

    Returns
    -------
    ndarray of shape (3, 3)
        A proper rotation matrix (determinant +1).
    """
    a = mobile - mobile.mean(0)
    b = target - target.mean(0)
    u, _, vt = np.linalg.svd(a.T @ b)
    sign = np.sign(np.linalg.det(vt.T @ u.T)) or 1.0
    return vt.T @ np.diag([1.0, 1.0, sign]) @ u.T


@dataclass(frozen=True)
class RigidTransform:
    """``x -> rotation @ x + translation_A``.

    Attributes
    ----------
    rotation : ndarray of shape (3, 3)
    translation_A : ndarray of shape (3,)
    rmsd_A : float
        Root-mean-square deviation of the fitted points after the transform (Å).
    n_points : int
        Number of matched points the fit used.
    """

    rotation: np.ndarray
    translation_A: np.ndarray
    rmsd_A: float
    n_points: int

    def __post_init__(self):
        self.rotation.setflags(write=False)
        self.translation_A.setflags(write=False)

    def apply(self, coords_A) -> np.ndarray:
        """Transform points of shape (..., 3)."""
        return np.asarray(coords_A, dtype=np.float64) @ self.rotation.T + self.translation_A

    def apply_direction(self, vector) -> np.ndarray:
        """Rotate a direction (no translation)."""
        return self.rotation @ np.asarray(vector, dtype=np.float64)

    def to_dict(self) -> dict:
        return {
            "rotation": self.rotation.tolist(),
            "translation_A": self.translation_A.tolist(),
            "rmsd_A": self.rmsd_A,
            "n_points": self.n_points,
        }


def superpose(mobile, target) -> RigidTransform:
    """Best rigid transform carrying ``mobile`` onto ``target`` (least squares).

    Parameters
    ----------
    mobile, target : array_like of shape (m, 3)
        Matched points in Å, m >= 3.

    Returns
    -------
    RigidTransform

    Raises
    ------
    InputError
        If the arrays differ in shape or hold fewer than 3 points.

    Examples
    --------
    >>> import numpy as np
    >>> pts = np.array([[0., 0, 0], [1, 0, 0], [0, 2, 0], [0, 0, 3]])
    >>> fit = superpose(pts, pts + [1.0, 2.0, 3.0])
    >>> np.round(fit.translation_A, 6).tolist(), round(fit.rmsd_A, 9)
    ([1.0, 2.0, 3.0], 0.0)
    """
    a = as_coords_A(mobile, "mobile")
    b = as_coords_A(target, "target")
    if a.shape != b.shape:
        raise InputError(f"mobile and target must have the same shape, got {a.shape} and {b.shape}")
    if len(a) < 3:
        raise InputError(f"superposition needs at least 3 matched points, got {len(a)}")
    rot = kabsch_rotation(a, b)
    trans = b.mean(0) - rot @ a.mean(0)
    moved = a @ rot.T + trans
    rmsd = float(np.sqrt(((moved - b) ** 2).sum(1).mean()))
    return RigidTransform(rot, trans, rmsd, len(a))


def rotation_axis_angle(rot: np.ndarray) -> tuple[np.ndarray, float]:
    """Unit axis and angle (rad, in [0, pi]) of a rotation matrix (robust at 180 degrees)."""
    vals, vecs = np.linalg.eigh(0.5 * (rot + rot.T))
    axis = vecs[:, int(np.argmax(vals))]
    angle = float(np.arccos(np.clip((np.trace(rot) - 1) / 2, -1, 1)))
    return axis, angle


def signed_rotation_angle(rot: np.ndarray, direction: np.ndarray) -> float:
    """Angle (rad, in (-pi, pi]) of ``rot`` about ``direction`` (right-hand rule)."""
    axis, angle = rotation_axis_angle(rot)
    skew = np.array([rot[2, 1] - rot[1, 2], rot[0, 2] - rot[2, 0], rot[1, 0] - rot[0, 1]])
    sign = 1.0 if skew @ direction >= 0 else -1.0
    if abs(angle - np.pi) < 1e-6:
        return float(np.pi)
    return sign * angle


def rotate_about(points, point, axis, angle) -> np.ndarray:
    """Rotate points by ``angle`` (rad) about the line through ``point`` along ``axis``."""
    k = np.asarray(axis, dtype=np.float64)
    k = k / np.linalg.norm(k)
    rel = np.asarray(points, dtype=np.float64) - point
    cos, sin = np.cos(angle), np.sin(angle)
    return point + rel * cos + np.cross(k, rel) * sin + np.outer(rel @ k, k) * (1 - cos)


def rotation_matrix(axis, angle) -> np.ndarray:
    """Matrix of the rotation by ``angle`` (rad) about the unit vector ``axis``."""
    return rotate_about(np.eye(3), np.zeros(3), axis, angle).T
