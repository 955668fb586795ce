"""poreprobe: ion-channel pore geometry from structural models.

Read a channel model, find its pore axis, roll spherical probes through the
pore, and turn the geometry into bench numbers. All results are model-based
estimates; they depend on the radius set and the model's quality.
"""

__version__ = "0.1.0"

from poreprobe.axis import PoreAxis, find_pore_axis  # noqa: E402
from poreprobe.errors import (  # noqa: E402
    InputError,
    PoreNotFoundError,
    PoreprobeError,
    QualityWarning,
)
from poreprobe.kernel import AtomSpheres, clearance_A  # noqa: E402
from poreprobe.probes import ProbeScan, capture_radius_at, probe_scan  # noqa: E402
from poreprobe.profile import RadiusProfile, radius_profile  # noqa: E402
from poreprobe.radii import RADIUS_SETS, atom_radii_A, get_radius_set  # noqa: E402
from poreprobe.reach import ReachField, reach_field  # noqa: E402
from poreprobe.structure import (  # noqa: E402
    Atoms,
    atoms_from_atomgroup,
    make_atoms,
    read_structure,
    select,
)

__all__ = [
    "__version__",
    "Atoms",
    "AtomSpheres",
    "InputError",
    "PoreAxis",
    "PoreNotFoundError",
    "PoreprobeError",
    "ProbeScan",
    "QualityWarning",
    "RADIUS_SETS",
    "RadiusProfile",
    "ReachField",
    "atom_radii_A",
    "atoms_from_atomgroup",
    "capture_radius_at",
    "clearance_A",
    "find_pore_axis",
    "get_radius_set",
    "make_atoms",
    "probe_scan",
    "radius_profile",
    "reach_field",
    "read_structure",
    "select",
]
