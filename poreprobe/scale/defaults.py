"""Settings of the trajectory analysis that the command line needs without importing MDAnalysis."""

#: How the pore axis follows the frames: fixed from a reference frame, or found per frame.
AXIS_MODES = ("fixed", "per-frame")
#: Percentiles of the radius reported per plane.
DEFAULT_PERCENTILES = (5.0, 25.0, 50.0, 75.0, 95.0)


def default_closing_threshold() -> float:
    """Default closing threshold (Å): the crystal radius of K+ (Shannon 1976, CN 6, 1.38 Å)
    less the 0.25 Å borderline band, the rule of the permeation verdict
    (:mod:`poreprobe.checks.verdict`): 1.13 Å."""
    from poreprobe.bench.ions import BORDERLINE_BAND_A, get_ion

    return round(get_ion("K").crystal_radius_A - BORDERLINE_BAND_A, 10)
