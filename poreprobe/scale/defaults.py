"""Settings of the trajectory analysis that the command line needs without importing MDAnalysis."""

#: How the pore axis follows the frames: fixed from a reference frame, or found per frame.
AXIS_MODES = ("fixed", "per-frame")
#: Percentiles of the radius reported per plane.
DEFAULT_PERCENTILES = (5.0, 25.0, 50.0, 75.0, 95.0)


def default_closing_threshold() -> float:
    """Default closing threshold: the crystal radius of K+ (Shannon 1976, CN 6), in Å."""
    from poreprobe.bench.ions import get_ion

    return get_ion("K").crystal_radius_A
