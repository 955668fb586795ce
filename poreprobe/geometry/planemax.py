"""The largest empty sphere centred in a plane: a trust-region climb on the clearance.

In a plane at height s (axis frame), the clearance of a point c is
``f(c) = min_i f_i(c)`` with ``f_i(c) = sqrt(|c - q_i|^2 + (s - s_i)^2) - r_i``, where q_i
is atom i's in-plane position. Its local maxima sit where two or three of the f_i meet
(the largest empty circle problem with weights), so the climb is a sequential linear
program with a trust region, the standard method for such max-min problems: at the
current centre, linearise the ``K`` smallest f_i and solve

    maximise t  subject to  f_i + g_i . d >= t  (i = 1..K),  |d|_inf <= delta

exactly by enumerating the vertices of that small polytope (three active rows each).
Where the linear model sees no way up, a second-order check (the ridge tangent of the
three nearest atoms' pairs, and the axis directions) either finds one or confirms the
maximum.
The step is accepted if the exact clearance (KD-tree kernel, all atoms) increases, and
delta grows or shrinks with the ratio of actual to predicted gain. Near a vertex the
linear model is exact to first order, so convergence is fast (a handful of steps), and
every value returned is the exact clearance at the returned point.
"""

from __future__ import annotations

import itertools

import numpy as np

from poreprobe.geometry.kernel import AtomSpheres

_K = 6  # atoms linearised per step
_TRIPLES = np.array(list(itertools.combinations(range(_K + 4), 3)))
_GAIN_TOL_A = 1e-9
_MIN_STEP_A = 1e-7


def _lp_vertices_step(f: np.ndarray, g: np.ndarray, delta: np.ndarray):
    """Solve the linearised max-min problem in a box, for many planes at once.

    Parameters
    ----------
    f : ndarray of shape (P, K)
        Clearances of the K nearest atoms at the current centres.
    g : ndarray of shape (P, K, 2)
        Their in-plane gradients.
    delta : ndarray of shape (P,)
        Trust-region half-widths.

    Returns
    -------
    step : ndarray of shape (P, 2)
    predicted : ndarray of shape (P,)
        The linear model's optimum ``t``.
    """
    n = len(f)
    k = f.shape[1]
    rows = np.zeros((n, k + 4, 3))
    rows[:, :k, :2] = -g
    rows[:, :k, 2] = 1.0
    rows[:, k, 0], rows[:, k + 1, 0], rows[:, k + 2, 1], rows[:, k + 3, 1] = 1, -1, 1, -1
    bound = np.concatenate([f, np.repeat(delta[:, None], 4, axis=1)], axis=1)
    triples = _TRIPLES if k == _K else np.array(list(itertools.combinations(range(k + 4), 3)))
    a, b, c = (rows[:, triples[:, j]] for j in range(3))  # each (P, T, 3)
    rhs = bound[:, triples]  # (P, T, 3)
    bc, ca, ab = _cross3(b, c), _cross3(c, a), _cross3(a, b)
    det = np.einsum("ptj,ptj->pt", a, bc)
    regular = np.abs(det) > 1e-12
    safe = np.where(regular, det, 1.0)[..., None]
    # Cramer's rule: the inverse of the matrix with rows a, b, c has columns bc, ca, ab / det
    x = (rhs[..., 0:1] * bc + rhs[..., 1:2] * ca + rhs[..., 2:3] * ab) / safe
    lhs = np.matmul(x, rows.transpose(0, 2, 1))  # (P, T, K + 4)
    feasible = regular & np.all(lhs <= bound[:, None, :] + 1e-9, axis=2)
    t = np.where(feasible, x[..., 2], -np.inf)
    best = np.argmax(t, axis=1)
    pick = np.arange(n)
    return x[pick, best, :2], t[pick, best]


def _cross3(u: np.ndarray, v: np.ndarray) -> np.ndarray:
    """Cross product over the last axis (length 3), written out: np.cross's axis handling
    costs more than the arithmetic for these many small vectors."""
    u0, u1, u2 = u[..., 0], u[..., 1], u[..., 2]
    v0, v1, v2 = v[..., 0], v[..., 1], v[..., 2]
    return np.stack([u1 * v2 - u2 * v1, u2 * v0 - u0 * v2, u0 * v1 - u1 * v0], axis=-1)


_ESCAPE_STEPS_A = (0.1, 0.01, 0.001)


def _escape(spheres: AtomSpheres, c: np.ndarray, s: np.ndarray, g: np.ndarray):
    """Second-order check where the linear model sees no way up.

    The clearances are convex, so the linear model misses gains that are second order:
    along the ridge between two atoms pulling in opposite directions (a saddle of the
    max-min function), or away from an atom whose in-plane position the centre sits on.
    Try the ridge tangents of each pair of the three nearest atoms (equal clearances
    order arbitrarily) and the four axis directions at a few
    step sizes; return which centres improved, the centres and a new trust radius.
    """
    ridges = []
    for i, j in itertools.combinations(range(min(3, g.shape[1])), 2):
        ridge = g[:, i] - g[:, j]
        ridge = np.stack([-ridge[:, 1], ridge[:, 0]], axis=1)
        ridge /= np.maximum(np.linalg.norm(ridge, axis=1, keepdims=True), 1e-12)
        ridges += [ridge, -ridge]
    axes = np.broadcast_to(np.array([[1.0, 0], [-1, 0], [0, 1], [0, -1]]), (len(c), 4, 2))
    dirs = np.concatenate([np.stack(ridges, axis=1), axes], axis=1) if ridges else axes
    steps = np.array(_ESCAPE_STEPS_A)
    trial = c[:, None, None, :] + steps[None, :, None, None] * dirs[:, None, :, :]
    n_try = trial.shape[1] * trial.shape[2]
    trial = trial.reshape(len(c), n_try, 2)
    pts = np.concatenate([trial, np.repeat(s[:, None, None], n_try, axis=1)], axis=2)
    values = spheres.clearance_A(pts.reshape(-1, 3)).reshape(len(c), n_try)
    current = spheres.clearance_A(np.column_stack([c, s]))
    best = np.argmax(values, axis=1)
    pick = np.arange(len(c))
    moved = values[pick, best] > current + _GAIN_TOL_A
    new_c = np.where(moved[:, None], trial[pick, best], c)
    new_delta = np.repeat(steps, dirs.shape[1])[best]
    return moved, new_c, new_delta


def _linearise(spheres: AtomSpheres, c: np.ndarray, s: np.ndarray, k: int):
    """Clearances (exact, sorted) of the k nearest atoms at centres c, and their gradients."""
    f, near = spheres.nearest(np.column_stack([c, s]), k=k)
    spread = c[:, None, :] - spheres.coords_A[near][:, :, :2]
    g = spread / np.maximum((f + spheres.radii_A[near])[..., None], 1e-12)
    return f, g


def _strict_vertex(
    f: np.ndarray, g: np.ndarray, tol_A: float = 1e-6, margin: float = 0.02
) -> np.ndarray:
    """Whether each centre is a strict local maximum to first order.

    True where the three smallest clearances are equal (within ``tol_A``) and the origin
    lies well inside the triangle of their gradients (every barycentric weight above
    ``margin``): then every direction lowers one of them linearly, and no second-order
    gain can exist nearby.
    """
    if f.shape[1] < 3:
        return np.zeros(len(f), dtype=bool)
    tied = f[:, 2] - f[:, 0] < tol_A
    a, b, c = g[:, 0], g[:, 1], g[:, 2]
    area = (b[:, 0] - a[:, 0]) * (c[:, 1] - a[:, 1]) - (c[:, 0] - a[:, 0]) * (b[:, 1] - a[:, 1])
    safe = np.where(np.abs(area) > 1e-12, area, 1.0)
    w_a = (b[:, 0] * c[:, 1] - c[:, 0] * b[:, 1]) / safe
    w_b = (c[:, 0] * a[:, 1] - a[:, 0] * c[:, 1]) / safe
    w_c = 1.0 - w_a - w_b
    inside = (np.abs(area) > 1e-12) & (np.minimum(np.minimum(w_a, w_b), w_c) > margin)
    return tied & inside


def maximise_in_planes(
    spheres: AtomSpheres,
    s_A: np.ndarray,
    start_A: np.ndarray,
    cap_A: float,
    *,
    delta_A: float = 1.0,
    max_steps: int = 200,
):
    """Climb to a local maximum of the clearance in each plane.

    Parameters
    ----------
    spheres : AtomSpheres
        Atoms in the axis frame (u, v, s).
    s_A : ndarray of shape (P,)
        Plane heights.
    start_A : ndarray of shape (P, 2)
        Starting (u, v) of each climb.
    cap_A : float
        Stop climbing once the clearance exceeds this (an open plane).
    delta_A : float
        Initial trust-region half-width (Å).
    max_steps : int
        Safety bound on the number of steps.

    Returns
    -------
    centres_A : ndarray of shape (P, 2)
    clearance_A : ndarray of shape (P,)
        Exact clearance at each centre.
    """
    s = np.asarray(s_A, dtype=np.float64)
    c = np.array(start_A, dtype=np.float64)
    delta = np.full(len(s), float(delta_A))
    k = min(_K, len(spheres.coords_A))
    f, g = _linearise(spheres, c, s, k)
    active = np.ones(len(s), dtype=bool)
    for _ in range(max_steps):
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        current = f[idx, 0]
        step, predicted = _lp_vertices_step(f[idx], g[idx], delta[idx])
        gain = predicted - current
        trial = c[idx] + step
        f_trial, g_trial = _linearise(spheres, trial, s[idx], k)
        actual = f_trial[:, 0] - current
        accept = actual > 0
        moved = idx[accept]
        c[moved], f[moved], g[moved] = trial[accept], f_trial[accept], g_trial[accept]
        ratio = np.where(gain > 0, actual / np.maximum(gain, 1e-300), 0.0)
        size = np.abs(step).max(axis=1)
        new_delta = delta[idx].copy()
        shrink = ratio < 0.25
        new_delta[shrink] = 0.25 * np.maximum(size[shrink], _MIN_STEP_A)
        grow = (ratio > 0.75) & (size >= 0.99 * delta[idx])
        new_delta[grow] = np.minimum(2.0 * delta[idx][grow], 4.0)
        delta[idx] = new_delta
        reached = f[idx, 0] > cap_A
        stalled = ((gain < _GAIN_TOL_A) | (delta[idx] < _MIN_STEP_A)) & ~reached
        if stalled.any():
            doubtful = stalled & ~_strict_vertex(f[idx], g[idx])
            rows = idx[doubtful]
            if rows.size:
                moved, c[rows], delta[rows] = _escape(spheres, c[rows], s[rows], g[rows])
                f[rows[moved]], g[rows[moved]] = _linearise(
                    spheres, c[rows[moved]], s[rows[moved]], k
                )
                stalled[np.flatnonzero(doubtful)[moved]] = False
        active[idx[stalled | reached]] = False
    return c, f[:, 0].copy()
