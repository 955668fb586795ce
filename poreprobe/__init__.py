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
from poreprobe.profile import RadiusProfile, radius_profile  # noqa: E402
from poreprobe.radii import RADIUS_SETS, atom_radii_A, get_radius_set  # noqa: E402
from poreprobe.structure import (  # noqa: E402
    Atoms,
    atoms_from_atomgroup,
    make_atoms,
    read_structure,
    select,
)
from poreprobe.viewer_export import (  # noqa: E402
    CenterLine,
    FieldGrid,
    PoreSurface,
    center_line,
    clearance_grid,
    pore_surface,
    write_center_line,
    write_map,
    write_mesh,
)

__all__ = [
    "__version__",
    "Atoms",
    "AtomSpheres",
    "InputError",
    "PoreAxis",
    "PoreNotFoundError",
    "PoreprobeError",
    "QualityWarning",
    "RADIUS_SETS",
    "RadiusProfile",
    "atom_radii_A",
    "atoms_from_atomgroup",
    "clearance_A",
    "find_pore_axis",
    "get_radius_set",
    "make_atoms",
    "radius_profile",
    "read_structure",
    "select",
    # 3-D exports for molecular viewers (figures: import poreprobe.plots)
    "CenterLine",
    "FieldGrid",
    "PoreSurface",
    "center_line",
    "clearance_grid",
    "pore_surface",
    "write_center_line",
    "write_map",
    "write_mesh",
]
