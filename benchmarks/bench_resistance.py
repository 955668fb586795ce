"""Series-resistance model: accuracy against closed forms and speed.

Run from the repository root: ``python benchmarks/bench_resistance.py``. Prints

* ring-stack cylinders (carbon rings, Bondi 1964 r_C = 1.70 Å): the model's total
  resistance against ``rho L/(pi a^2) + 2 rho/(4a)`` (Hille 2001; Hall 1975) with
  ``a = R_ring - r_C`` and ``L`` the ring span, and the pore term against the integral of
  the exact ring-stack profile (synthetic.expected_radius_A) on a fine grid;
* the time to compute the breakdown from a ready profile, and profile + breakdown, for
  the ring stacks and for the gramicidin A test structure shipped with MDAnalysisTests.

Timings depend on the machine and its load (shared cores): read them as rough figures.
All conductances are model estimates, not measurements.
"""

from __future__ import annotations

import os
import time

import numpy as np

import poreprobe
from poreprobe.geometry import synthetic

AXIS = poreprobe.PoreAxis([0, 0, 0], [0, 0, 1], "user")
RHO = 0.8
R_C = 1.70


def timed(func, repeat=5):
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = func()
        best = min(best, time.perf_counter() - t0)
    return out, best


def cylinders() -> None:
    print("ring-stack cylinders, rho = 0.8 Ohm m")
    print(
        f"{'R_ring':>7} {'L':>6} {'model GOhm':>11} {'closed GOhm':>12} {'rel err':>9} "
        f"{'pore vs exact profile':>22}"
    )
    for ring, length in ((6.7, 10.0), (8.0, 16.0), (5.5, 30.0), (12.0, 40.0)):
        atoms, ring_r, ring_z = synthetic.cylinder(ring, length, atoms_per_ring=36)
        prof = poreprobe.radius_profile(atoms, AXIS)
        est = poreprobe.series_resistance(prof, atoms=atoms, resistivity_ohm_m=RHO)
        a = (ring - R_C) * 1e-10
        span = (ring_z[-1] - ring_z[0]) * 1e-10
        closed = RHO * span / (np.pi * a * a) + 2 * RHO / (4 * a)
        fine = np.linspace(ring_z[0], ring_z[-1], 40001)
        r = synthetic.expected_radius_A(ring_r, ring_z, fine, R_C) * 1e-10
        exact_pore = RHO * np.trapezoid(1 / (np.pi * r * r), fine * 1e-10)
        pore = sum(s.resistance_Gohm for s in est.segments if s.kind == "pore") * 1e9
        print(
            f"{ring:7.1f} {length:6.1f} {est.resistance_Gohm:11.4f} {closed * 1e-9:12.4f} "
            f"{est.resistance_Gohm * 1e9 / closed - 1:9.2e} {pore / exact_pore - 1:22.2e}"
        )


def speed() -> None:
    print("\nspeed (best of 5; noisy on shared cores)")
    cases = [("hourglass ring stack", synthetic.hourglass()[0], AXIS)]
    try:
        import MDAnalysisTests

        path = os.path.join(os.path.dirname(MDAnalysisTests.__file__), "data", "1grm_single.pdb")
        atoms = poreprobe.read_structure(path)
        cases.append(("gramicidin A (1grm_single.pdb)", atoms, poreprobe.find_pore_axis(atoms)))
    except (ImportError, OSError):
        print("  (MDAnalysisTests not installed: gramicidin case skipped)")
    for label, atoms, axis in cases:
        prof, t_prof = timed(lambda a=atoms, x=axis: poreprobe.radius_profile(a, x))
        est, t_est = timed(
            lambda p=prof, a=atoms: poreprobe.series_resistance(
                p, atoms=a, electrolyte="KCl", conc_mM=150
            ),
            repeat=20,
        )
        print(
            f"  {label}: {len(atoms)} atoms, {len(prof.s_A)} planes; profile "
            f"{t_prof * 1e3:.0f} ms, breakdown {t_est * 1e3:.2f} ms; "
            f"{est.conductance_pS:.0f} pS in 150 mM KCl (model estimate)"
        )


if __name__ == "__main__":
    cylinders()
    speed()
