"""poreprobe: ion-channel pore geometry from structural models.

Read a channel model, find its pore axis, roll spherical probes through the
pore, and turn the geometry into bench numbers. All results are model-based
estimates; they depend on the radius set and the model's quality.
"""

__version__ = "0.1.0"

from poreprobe.axis import PoreAxis, find_pore_axis  # noqa: E402
from poreprobe.batch import BatchRow, BatchSummary, profile_files  # noqa: E402
from poreprobe.capture import (  # noqa: E402
    CaptureRadiusEstimate,
    capture_radius_from_current_A,
    diffusion_limited_current_pA,
    estimate_capture_radius,
)
from poreprobe.compare import ModelComparison, compare_models  # noqa: E402
from poreprobe.conductance import (  # noqa: E402
    ConductanceEstimate,
    SegmentResistance,
    access_resistance_ohm,
    series_resistance,
)
from poreprobe.electrolyte import BathConductivity, bath_conductivity  # noqa: E402
from poreprobe.errors import (  # noqa: E402
    InputError,
    PoreNotFoundError,
    PoreprobeError,
    QualityWarning,
)
from poreprobe.ions import IONS, Ion, get_ion  # noqa: E402
from poreprobe.kernel import AtomSpheres, clearance_A  # noqa: E402
from poreprobe.lining import PoreLining, pore_lining  # noqa: E402
from poreprobe.match import CaptureMatch, match_capture_radius, match_scan  # noqa: E402
from poreprobe.probes import ProbeScan, capture_radius_at, probe_scan  # noqa: E402
from poreprobe.profile import RadiusProfile, radius_profile  # noqa: E402
from poreprobe.quality import QualityReport, check_model  # noqa: E402
from poreprobe.radii import RADIUS_SETS, atom_radii_A, get_radius_set  # noqa: E402
from poreprobe.reach import ReachField, reach_field  # noqa: E402
from poreprobe.segments import PoreSegment, pore_extent, pore_segments  # noqa: E402
from poreprobe.side_split import (  # noqa: E402
    RatioFreeEnergy,
    SideResistanceSplit,
    ratio_free_energy,
    split_side_resistances,
)
from poreprobe.structure import (  # noqa: E402
    Atoms,
    atoms_from_atomgroup,
    make_atoms,
    read_structure,
    select,
)
from poreprobe.superpose import superpose  # noqa: E402
from poreprobe.symmetry import subunit_deviation  # noqa: E402
from poreprobe.viewer_export import (  # noqa: E402
    CenterLine,
    FieldGrid,
    PoreSurface,
    center_line,
    clearance_grid,
    pore_surface,
    reach_grid,
    write_center_line,
    write_map,
    write_mesh,
)
from poreprobe.viscosity import (  # noqa: E402
    VISCOGENS,
    DiffusionEstimate,
    diffusion_coefficient,
    water_viscosity_mPa_s,
)

__all__ = [
    "__version__",
    "access_resistance_ohm",
    "atom_radii_A",
    "Atoms",
    "atoms_from_atomgroup",
    "AtomSpheres",
    "bath_conductivity",
    "BathConductivity",
    "BatchRow",
    "BatchSummary",
    "capture_radius_at",
    "capture_radius_from_current_A",
    "CaptureMatch",
    "CaptureRadiusEstimate",
    "check_model",
    "clearance_A",
    "compare_models",
    "ConductanceEstimate",
    "diffusion_coefficient",
    "diffusion_limited_current_pA",
    "DiffusionEstimate",
    "estimate_capture_radius",
    "find_pore_axis",
    "get_ion",
    "get_radius_set",
    "InputError",
    "Ion",
    "IONS",
    "make_atoms",
    "match_capture_radius",
    "match_scan",
    "ModelComparison",
    "pore_extent",
    "pore_lining",
    "pore_segments",
    "profile_files",
    "PoreAxis",
    "PoreLining",
    "PoreNotFoundError",
    "PoreprobeError",
    "PoreSegment",
    "probe_scan",
    "ProbeScan",
    "QualityReport",
    "QualityWarning",
    "radius_profile",
    "RADIUS_SETS",
    "RadiusProfile",
    "ratio_free_energy",
    "RatioFreeEnergy",
    "reach_field",
    "ReachField",
    "read_structure",
    "SegmentResistance",
    "select",
    "series_resistance",
    "SideResistanceSplit",
    "split_side_resistances",
    "subunit_deviation",
    "superpose",
    "VISCOGENS",
    "water_viscosity_mPa_s",
    # 3-D exports for molecular viewers (figures: import poreprobe.plots)
    "CenterLine",
    "FieldGrid",
    "PoreSurface",
    "center_line",
    "clearance_grid",
    "pore_surface",
    "reach_grid",
    "write_center_line",
    "write_map",
    "write_mesh",
]

#: Names whose modules import MDAnalysis's analysis machinery or dask: loaded on first use.
_LAZY_EXPORTS = {
    "PoreProfileAnalysis": "poreprobe.trajectory",
    "TrajectoryProfiles": "poreprobe.trajectory",
    "profile_trajectory": "poreprobe.trajectory",
    "DaskClientBackend": "poreprobe.parallel",
}


def __getattr__(name):
    if name in _LAZY_EXPORTS:
        import importlib

        return getattr(importlib.import_module(_LAZY_EXPORTS[name]), name)
    raise AttributeError(f"module 'poreprobe' has no attribute {name!r}")
