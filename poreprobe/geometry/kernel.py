"""The distance field: clearance of points from a set of atomic spheres.

The clearance of a point x is ``min_i (|x - a_i| - r_i)``: the radius of the
largest sphere centred at x that overlaps no atom's van der Waals sphere
(negative inside an atom). It is the one hot loop of poreprobe, so it is
computed from the few atoms nearest by centre distance (one KD-tree query),
which settles the exact minimum for almost every point because radii differ by
little; points where it cannot be certain fall back to one KD-tree per distinct
radius, where the nearest atom of each radius class gives that class's smallest
clearance exactly.
"""

from __future__ import annotations

import numpy as np
from scipy.spatial import cKDTree

from poreprobe._validate import as_coords_A
from poreprobe.errors import InputError

_THREADED_BATCH = 4_000


def _default_workers(n_points: int, workers: int | None) -> int:
    if workers is not None:
        return workers
    return -1 if n_points > _THREADED_BATCH else 1


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
        self._k_single = 4 if len(self.class_radii_A) > 1 else 1

    @property
    def max_radius_A(self) -> float:
        return float(self.class_radii_A[-1])

    def clearance_A(
        self,
        points_A,
        *,
        return_index: bool = False,
        workers: int | None = None,
        max_clearance_A: float | None = None,
    ):
        """Exact clearance of each point.

        Parameters
        ----------
        points_A : array_like of shape (m, 3)
            Query points in Å.
        return_index : bool
            Also return the index of the atom that sets the clearance.
        workers : int, optional
            Threads for the KD-tree queries (-1: all cores). Default: all cores for
            batches of more than 4,000 points, one thread otherwise (thread start-up
            costs more than it saves on small batches).
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
        workers = _default_workers(len(pts), workers)
        bound = np.inf
        if max_clearance_A is not None:
            bound = float(max_clearance_A)
            if not np.isfinite(bound):
                raise InputError(f"max_clearance_A must be finite, got {max_clearance_A!r}")
        best, best_idx = self._nearest_clearance(pts, workers, bound)
        if max_clearance_A is not None:
            clipped = best > bound
            best[clipped] = bound
            best_idx[clipped] = -1
        if return_index:
            return best.reshape(shape), best_idx.reshape(shape)
        return best.reshape(shape)

    def _nearest_clearance(self, pts: np.ndarray, workers: int, bound: float = np.inf):
        """Exact smallest clearance: k nearest atoms from one tree, checked, then per class.

        Among the k atoms nearest by centre distance, the smallest clearance is exact
        whenever the k-th distance minus the largest radius is no smaller than it (no atom
        farther away can do better); the few points that fail that test are settled with
        one tree per radius class. With a finite ``bound``, atoms whose clearance must
        exceed it are not searched for (such points may come back as ``inf``, index -1).
        """
        n = len(self.coords_A)
        k = min(self._k_single, n)
        reach = bound + self.max_radius_A + 1e-9
        dist, j = self.tree.query(pts, k=k, workers=workers, distance_upper_bound=reach)
        dist, j = dist.reshape(len(pts), k), j.reshape(len(pts), k)
        missing = j >= n
        j = np.where(missing, 0, j)
        values = np.where(missing, np.inf, dist - self.radii_A[j])
        pick = np.argmin(values, axis=1)
        rows = np.arange(len(pts))
        best = values[rows, pick]
        best_idx = np.where(missing[rows, pick], -1, j[rows, pick])
        unsure = np.flatnonzero(dist[:, -1] - self.max_radius_A < best)
        if unsure.size and k < n:
            sub = pts[unsure]
            sub_best = np.full(len(sub), np.inf)
            sub_idx = np.full(len(sub), -1, dtype=np.int64)
            for radius, idx, tree in zip(
                self.class_radii_A, self._class_index, self._trees, strict=True
            ):
                d, jj = tree.query(
                    sub, k=1, workers=workers, distance_upper_bound=bound + radius + 1e-9
                )
                found = jj < len(idx)
                value = np.where(found, d - radius, np.inf)
                better = value < sub_best
                sub_best[better] = value[better]
                sub_idx[better] = idx[jj[better]]
            best[unsure], best_idx[unsure] = sub_best, sub_idx
        return best, best_idx

    def nearest(self, points_A, k: int = 3, *, workers: int | None = None):
        """The ``k`` atoms with the smallest clearance for each point, sorted.

        One query for the ``2k`` atoms nearest by centre distance settles almost every
        point (radii differ by little); points where an atom farther away could still
        rank among the ``k`` fall back to one query per radius class.

        Returns
        -------
        clearance_A : ndarray of shape (m, k)
        index : ndarray of int, shape (m, k)
            Atom indices; when there are fewer than ``k`` atoms the last is repeated.
        """
        pts = np.asarray(points_A, dtype=np.float64).reshape(-1, 3)
        workers = _default_workers(len(pts), workers)
        n = len(self.coords_A)
        kk = min(2 * k, n)
        dist, j = self.tree.query(pts, k=kk, workers=workers)
        dist, j = dist.reshape(len(pts), kk), j.reshape(len(pts), kk)
        values = dist - self.radii_A[j]
        order = np.argsort(values, axis=1)[:, :k]
        rows = np.arange(len(pts))[:, None]
        values, indices = values[rows, order], j[rows, order]
        unsure = np.flatnonzero(dist[:, -1] - self.max_radius_A < values[:, -1])
        if unsure.size and kk < n:
            values[unsure], indices[unsure] = self._nearest_by_class(pts[unsure], k, workers)
        if values.shape[1] < k:
            pad = k - values.shape[1]
            values = np.concatenate([values, np.repeat(values[:, -1:], pad, axis=1)], axis=1)
            indices = np.concatenate([indices, np.repeat(indices[:, -1:], pad, axis=1)], axis=1)
        return values, indices

    def _nearest_by_class(self, pts: np.ndarray, k: int, workers: int):
        """Exact k smallest clearances from the k nearest atoms of every radius class."""
        values, indices = [], []
        for radius, idx, tree in zip(
            self.class_radii_A, self._class_index, self._trees, strict=True
        ):
            kk = min(k, len(idx))
            dist, j = tree.query(pts, k=kk, workers=workers)
            dist, j = dist.reshape(len(pts), kk), j.reshape(len(pts), kk)
            values.append(dist - radius)
            indices.append(idx[j])
        values = np.concatenate(values, axis=1)
        indices = np.concatenate(indices, axis=1)
        order = np.argsort(values, axis=1)[:, :k]
        rows = np.arange(len(pts))[:, None]
        return values[rows, order], indices[rows, order]


def clearance_A(points_A, coords_A, radii_A, *, return_index: bool = False):
    """Clearance ``min_i (|x - a_i| - r_i)`` of each point from the atoms (Å).

    One-shot form of :meth:`AtomSpheres.clearance_A`; build an
    :class:`AtomSpheres` once for repeated queries.
    """
    return AtomSpheres(coords_A, radii_A).clearance_A(points_A, return_index=return_index)
