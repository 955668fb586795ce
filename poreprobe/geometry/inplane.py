"""A deterministic in-plane orientation from the structure, for grids around the pore axis.

The axis frame's (u, v) basis (:meth:`PoreAxis.basis`) is built from the lab frame, so a
grid laid out in it turns with the lab frame under a rigid motion of the input. The grid
of the probe scan is instead turned by an angle ``theta`` fixed by the atoms near the
pore, so it moves with the structure.

Definition
----------
For the atoms within the pore cylinder (lateral distance up to ``pore_radius_A``, axial
extent of the cylinder's atoms), with in-plane angles ``phi_i`` in the axis frame, the
angular moments are ``M_k = sum_i exp(i k phi_i)`` for ``k = 1..8``. The order ``k`` with the
largest ``|M_k|`` (rotation-invariant; ``k = 2`` gives the principal in-plane axes, larger
``k`` the n-fold pattern of a symmetric channel) sets ``theta = arg(M_k) / k`` up to a
multiple of ``2 pi / k``; among those ``k`` choices, the one along which the third
angular moment ``M_3`` (or, where ``k = 3``, the first, ``M_1``) points most positively
is taken, which fixes the sign as a third moment does. If every moment vanishes (fewer
than three atoms) ``theta = 0``.

Under a rigid motion the atoms' angles all shift by the same amount, every ``M_k`` turns
with them, and ``theta`` follows; for an exactly k-fold symmetric structure any of the
``k`` choices gives the same grid relative to the atoms.
"""

from __future__ import annotations

import numpy as np

from poreprobe._validate import check_positive
from poreprobe.errors import InputError

_ORDERS = np.arange(1, 9)


def inplane_angle_rad(frame_A, pore_radius_A: float) -> float:
    """Grid rotation angle (radians) about the axis, from the atoms near the pore.

    Parameters
    ----------
    frame_A : array_like of shape (n, 3)
        Atom coordinates in the axis frame (u, v, s), Å.
    pore_radius_A : float
        Atoms within this lateral distance of the axis count (Å, > 0).

    Returns
    -------
    float
        ``theta``: the grid's first in-plane axis is ``cos(theta) u + sin(theta) v``.

    Examples
    --------
    >>> import numpy as np
    >>> pts = np.array([[2.0, 0, 0], [-2.0, 0, 0], [0, 1.0, 0], [0, -1.0, 0], [3.0, 0, 1]])
    >>> round(inplane_angle_rad(pts, 5.0), 6)
    0.0
    """
    frame = np.asarray(frame_A, dtype=np.float64)
    if frame.ndim != 2 or frame.shape[1] != 3:
        raise InputError(f"frame_A must have shape (n, 3), got {frame.shape}")
    radius = check_positive(pore_radius_A, "pore_radius_A")
    rho = np.hypot(frame[:, 0], frame[:, 1])
    near = (rho <= radius) & (rho > 1e-9)
    if np.count_nonzero(near) < 3:
        return 0.0
    phi = np.arctan2(frame[near, 1], frame[near, 0])
    moments = np.exp(1j * _ORDERS[:, None] * phi[None, :]).sum(axis=1)
    size = np.abs(moments)
    if size.max() < 1e-9 * near.sum():
        return 0.0
    # rotation-invariant choice; exact ties go to the smaller order (deterministic)
    k = int(_ORDERS[int(np.argmax(np.round(size / near.sum(), 9)))])
    base = float(np.angle(moments[k - 1])) / k
    candidates = base + 2.0 * np.pi * np.arange(k) / k
    sign_order = 1 if k == 3 else 3
    m = moments[sign_order - 1]
    score = np.real(m * np.exp(-1j * sign_order * candidates))
    theta = float(candidates[int(np.argmax(np.round(score, 9)))])
    return float(np.arctan2(np.sin(theta), np.cos(theta)))


def rotate_uv(frame_A, theta_rad: float) -> np.ndarray:
    """Axis-frame (u, v, s) points expressed in the grid frame turned by ``theta_rad``."""
    pts = np.asarray(frame_A, dtype=np.float64)
    c, s = np.cos(theta_rad), np.sin(theta_rad)
    out = pts.copy()
    out[..., 0] = c * pts[..., 0] + s * pts[..., 1]
    out[..., 1] = -s * pts[..., 0] + c * pts[..., 1]
    return out


def unrotate_uv(grid_A, theta_rad: float) -> np.ndarray:
    """Grid-frame points back in the axis frame (inverse of :func:`rotate_uv`)."""
    return rotate_uv(grid_A, -theta_rad)
