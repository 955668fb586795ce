"""The distance field: clearance of points from a set of atomic spheres.

The clearance of a point x is ``min_i (|x - a_i| - r_i)``: the radius of the
largest sphere centred at x that overlaps no atom's van der Waals sphere
(negative inside an atom). It is the one hot loop of poreprobe, so it is
computed with one KD-tree per distinct radius: the nearest atom of each radius
class gives that class's smallest clearance exactly, and the minimum over the
(few) classes is the exact clearance.
"""

from __future__ import annotations

import numpy as np
from scipy.spatial import cKDTree

from poreprobe._validate import as_coords_A
from poreprobe.errors import InputError


class AtomSpheres:
    """Atomic spheres ready for repeated clearance queries.

    Parameters
    ----------
    coords_A : array_like of shape (n, 3)
        Atom centres in Å.
    radii_A : array_like of shape (n,)
        Atom radii in Å (> 0).

    Examples
    --------
    >>> import numpy as np
    >>> spheres = AtomSpheres([[0.0, 0.0, 0.0]], [1.5])
    >>> float(spheres.clearance_A([[4.0, 0.0, 0.0]])[0])
    2.5
    """

    def __init__(self, coords_A, radii_A):
        self.coords_A = as_coords_A(coords_A)
        radii = np.asarray(radii_A, dtype=np.float64).reshape(-1)
        if radii.shape != (len(self.coords_A),):
            raise InputError(f"radii_A must have {len(self.coords_A)} values, got {radii.shape}")
        if not np.isfinite(radii).all() or (radii <= 0).any():
            raise InputError("radii_A must be finite and > 0")
        self.radii_A = radii
        self.class_radii_A, inverse = np.unique(radii, return_inverse=True)
        self._class_index = [np.flatnonzero(inverse == k) for k in range(len(self.class_radii_A))]
        self._trees = [cKDTree(self.coords_A[idx]) for idx in self._class_index]
        self.tree = cKDTree(self.coords_A)

    @property
    def max_radius_A(self) -> float:
        return float(self.class_radii_A[-1])

    def clearance_A(self, points_A, *, return_index: bool = False, workers: int = -1,
                    max_clearance_A: float | None = None):
        """Exact clearance of each point.

        Parameters
        ----------
        points_A : array_like of shape (m, 3)
            Query points in Å.
        return_index : bool
            Also return the index of the atom that sets the clearance.
        workers : int
            Threads for the KD-tree queries (-1: all cores).
        max_clearance_A : float, optional
            Clip the result at this value (Å): values up to it stay exact, larger
            ones are reported as ``max_clearance_A`` (index -1 where no atom lies
            within reach). Far points then cost much less.

        Returns
        -------
        clearance_A : ndarray of shape (m,)
        index : ndarray of int, shape (m,)
            Only with ``return_index``.
        """
        pts = np.asarray(points_A, dtype=np.float64)
        shape = pts.shape[:-1]
        pts = pts.reshape(-1, 3)
        best = np.full(len(pts), np.inf)
        best_idx = np.zeros(len(pts), dtype=np.int64)
        bound = np.inf
        if max_clearance_A is not None:
            bound = float(max_clearance_A)
            if not np.isfinite(bound):
                raise InputError(f"max_clearance_A must be finite, got {max_clearance_A!r}")
            best_idx[:] = -1
        for radius, idx, tree in zip(self.class_radii_A, self._class_index, self._trees,
                                     strict=True):
            dist, j = tree.query(pts, k=1, workers=workers,
                                 distance_upper_bound=bound + radius + 1e-9)
            value = dist - radius
            better = value < best
            best[better] = value[better]
            best_idx[better] = idx[j[better]]
        if max_clearance_A is not None:
            clipped = best > bound
            best[clipped] = bound
            best_idx[clipped] = -1
        if return_index:
            return best.reshape(shape), best_idx.reshape(shape)
        return best.reshape(shape)


def clearance_A(points_A, coords_A, radii_A, *, return_index: bool = False):
    """Clearance ``min_i (|x - a_i| - r_i)`` of each point from the atoms (Å).

    One-shot form of :meth:`AtomSpheres.clearance_A`; build an
    :class:`AtomSpheres` once for repeated queries.
    """
    return AtomSpheres(coords_A, radii_A).clearance_A(points_A, return_index=return_index)
