"""poreprobe: ion-channel pore geometry from structural models.

Read a channel model, find its pore axis, roll spherical probes through the
pore, and turn the geometry into bench numbers. All results are model-based
estimates; they depend on the radius set and the model's quality.
"""

__version__ = "0.1.0"

from poreprobe.axis import PoreAxis, find_pore_axis  # noqa: E402
from poreprobe.compare import ModelComparison, compare_models  # noqa: E402
from poreprobe.errors import (  # noqa: E402
    InputError,
    PoreNotFoundError,
    PoreprobeError,
    QualityWarning,
)
from poreprobe.kernel import AtomSpheres, clearance_A  # noqa: E402
from poreprobe.lining import PoreLining, pore_lining  # noqa: E402
from poreprobe.profile import RadiusProfile, radius_profile  # noqa: E402
from poreprobe.quality import QualityReport, check_model  # noqa: E402
from poreprobe.radii import RADIUS_SETS, atom_radii_A, get_radius_set  # noqa: E402
from poreprobe.structure import (  # noqa: E402
    Atoms,
    atoms_from_atomgroup,
    make_atoms,
    read_structure,
    select,
)
from poreprobe.superpose import superpose  # noqa: E402
from poreprobe.symmetry import subunit_deviation  # noqa: E402

__all__ = [
    "__version__",
    "Atoms",
    "AtomSpheres",
    "InputError",
    "ModelComparison",
    "PoreAxis",
    "PoreLining",
    "PoreNotFoundError",
    "PoreprobeError",
    "QualityReport",
    "QualityWarning",
    "RADIUS_SETS",
    "RadiusProfile",
    "atom_radii_A",
    "atoms_from_atomgroup",
    "check_model",
    "clearance_A",
    "compare_models",
    "find_pore_axis",
    "get_radius_set",
    "make_atoms",
    "pore_lining",
    "radius_profile",
    "read_structure",
    "select",
    "subunit_deviation",
    "superpose",
]
