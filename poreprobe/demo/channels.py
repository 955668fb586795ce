"""The invented demo channels: HalK, a tetrameric K+ channel that exists only here.

Everything in this module is invented: the channel, its name, its story, its
sequence and its states. The models are built by our own code
(:mod:`poreprobe.demo.peptide`) from ideal geometry, so they are realistic in form
(alpha helices at 3.6 residues per turn and 1.5 Å rise, standard residues with
all heavy atoms named as in the wwPDB Chemical Component Dictionary, no steric
clashes) but they are not structures of any real protein and carry no
experimental information. Use them to learn the tool and to test it.

The scenario
------------
HalK ("halcyon K+ channel") is said to come from an imaginary salt-marsh
microbe. Four identical subunits (chains A-D, 79 residues each) sit around the
pore axis (the z axis; the intracellular side at negative z). Each subunit has

* an outer helix (residues 1-24) facing the membrane,
* a turret loop (25-30) and a pore helix (31-41) pointing at the cavity,
* the selectivity filter S43-L44-G45-F46-G47, whose backbone carbonyl oxygens
  (of residues 43-46) form four rings on the pore axis,
* an outer loop (48-53) whose aspartate D48 lines the outer vestibule,
* an inner helix (54-79) with a glycine hinge (G66) and, near its C-terminal
  end, the phenylalanine F73 whose side chains form a ring at the inner
  entrance, where ions coming from the cell enter.

States and variants (see :data:`VARIANTS`):

``"open"``
    The reference structure.
``"widened"``
    The F73A mutant: the entrance ring of phenylalanines replaced by alanines,
    so the inner entrance is much wider.
``"closed"``
    The inner helices are bent by a few degrees at the G66 hinge, so the F73
    ring pinches the inner entrance shut for a dehydrated K+ ion.
breathing trajectory
    :func:`demo_trajectory`: 50 frames in which the inner helices swing about
    the hinge between the open state and 70 % of the way to the closed one
    (two cycles), with small random displacements of every atom. A cartoon of
    molecular dynamics, not a simulation.

Files
-----
:func:`write_demo_files` writes the models as PDB and mmCIF
(``demo_channel``, ``demo_widened``, ``demo_closed``) and the trajectory as XTC
(``demo_breathing.xtc``, topology ``demo_channel.pdb``) with fixed number
formatting and no dates, so the same package version writes the same bytes on
every run. ``structures_demo/build.py`` writes the committed copies, which ship
inside the package (:func:`poreprobe.demo.run.demo_path`).
"""

from __future__ import annotations

import os
import tempfile
from dataclasses import replace

import numpy as np

from poreprobe._validate import check_choice, check_int
from poreprobe.demo.peptide import ONE_TO_THREE, build_chain
from poreprobe.io.export import write_atomic
from poreprobe.io.structure import Atoms, concatenate_atoms

CHANNEL_NAME = "HalK"
VARIANTS = ("open", "widened", "closed")
#: Residue numbers of landmarks in every chain.
ENTRANCE_RESIDUE = 73
HINGE_RESIDUE = 66
FILTER_RESIDUES = (43, 44, 45, 46, 47)
VESTIBULE_RESIDUE = 48
#: Selection of atoms at the inner end, where ions enter (s grows from there).
ENTRY_SELECTION = "resid 76:79"
CHAINS = ("A", "B", "C", "D")
N_FRAMES = 50
FRAME_TIME_PS = 10.0
#: Standard deviation of the random per-atom displacement in each frame (Å).
JITTER_A = 0.15
#: Largest hinge swing of the breathing trajectory, as a fraction of the closed state's.
BREATHING_AMPLITUDE = 0.7
_JITTER_SEED = 20250808
#: Invented B-factors (Å²): 15 + 0.5 |z| (z in Å from the membrane centre), plus 6 in
#: the two extracellular loops, so that they vary as a real model's do.
_LOOPS = ((25, 30), (48, 53))

# The design below was found once by placing ideal helices and the filter strand,
# closing the loops between them by least squares on the loop dihedrals and
# choosing clash-free side-chain rotamers; the numbers are the result, kept
# here so that building is fast and exactly reproducible.

SEQUENCE = "MAKELALVALIVALFAALIGAWAYSGDGNSDELARLATLTAGSLGFGDGKNGSLVVASLVAALITGLVAALIFMARSKN"
_PHI_DEG = (
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -58.818,
    -62.664,
    -46.915,
    -119.053,
    -87.853,
    -60.140,
    -70.460,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    31.399,
    -112.402,
    -80.922,
    76.900,
    -77.410,
    119.951,
    -117.844,
    -141.073,
    -120.497,
    -128.417,
    97.941,
    -79.658,
    -45.123,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
    -57.000,
)
_PSI_DEG = (
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -38.979,
    -38.341,
    156.286,
    -52.683,
    103.541,
    153.938,
    111.418,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -59.815,
    49.155,
    -76.839,
    -79.144,
    84.076,
    -80.325,
    22.072,
    -21.207,
    137.050,
    17.174,
    156.222,
    174.005,
    21.988,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
    -47.000,
)
_ROTAMERS_DEG = {
    1: (-90, 180, 180),
    3: (-90, 180, 180, 180),
    4: (-90, 180, 0),
    5: (-90, 150),
    7: (-90, 150),
    8: (180,),
    10: (-90, 150),
    11: (-65, 180),
    12: (180,),
    14: (-90, 150),
    15: (-90, 120),
    18: (-90, 150),
    19: (-65, 180),
    22: (-90, 120),
    24: (-65, 150),
    25: (-90,),
    27: (-90, -120),
    29: (60, -60),
    30: (-65,),
    31: (-90, 120),
    32: (-90, 180, 0),
    33: (-90, 150),
    35: (-90, 180, 180, 180),
    36: (-90, 150),
    38: (-40,),
    39: (-90, 150),
    40: (-65,),
    43: (-90,),
    44: (-90, 150),
    46: (-90, 90),
    48: (-90, -120),
    50: (-90, 180, 180, 180),
    51: (-90, 120),
    53: (-65,),
    54: (-90, 150),
    55: (-65,),
    56: (180,),
    58: (-90,),
    59: (-90, 150),
    60: (180,),
    63: (-90, 150),
    64: (-65, 180),
    65: (-65,),
    67: (-90, 150),
    68: (180,),
    71: (-90, 150),
    72: (-65, 180),
    73: (180, 90),
    74: (-90, 180, 180),
    76: (-90, 180, 180, -65),
    77: (-90,),
    78: (-90, 180, 180, 180),
    79: (180, -120),
}
_POSE_ROTVEC = (1.1178346693, 0.2815887553, 1.6653486746)
_POSE_SHIFT_A = (20.479138, 2.551787, -22.770048)
_CLOSED_DELTA_DEG = {65: (4.443, -3.056), 66: (3.369, 5.975), 67: (5.852, 1.886)}
_CLOSED_ROTAMERS_DEG = {74: (-90, -150, 65), 79: (-90, 120)}


_FILE_STEMS = {"open": "demo_channel", "widened": "demo_widened", "closed": "demo_closed"}
TRAJECTORY_FILE = "demo_breathing.xtc"


def _c4_copies(chain_atoms: Atoms) -> Atoms:
    """Four copies of chain A rotated by 0, 90, 180 and 270 degrees about z (exactly)."""
    quarter = np.array([[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
    parts = []
    xyz = chain_atoms.coords_A
    for chain in CHAINS:
        parts.append(
            replace(chain_atoms, coords_A=xyz.copy(), chain=np.full(len(chain_atoms), chain))
        )
        xyz = xyz @ quarter.T
    return concatenate_atoms(parts)


def _pose(coords_A: np.ndarray) -> np.ndarray:
    from scipy.spatial.transform import Rotation

    rot = Rotation.from_rotvec(_POSE_ROTVEC).as_matrix()
    return coords_A @ rot.T + np.asarray(_POSE_SHIFT_A)


def _subunit(sequence: str, phi_deg, psi_deg, rotamers: dict[int, tuple]) -> Atoms:
    chi = {
        resid - 1: chis
        for resid, chis in rotamers.items()
        if ONE_TO_THREE[sequence[resid - 1]] not in ("ALA", "GLY", "PRO")
    }
    chain = build_chain(sequence, phi_deg, psi_deg, chi_deg=chi, chain="A")
    return replace(chain, coords_A=_pose(chain.coords_A))


def _hinge_dihedrals(fraction: float) -> tuple[np.ndarray, np.ndarray]:
    phi = np.array(_PHI_DEG)
    psi = np.array(_PSI_DEG)
    for resid, (d_phi, d_psi) in _CLOSED_DELTA_DEG.items():
        phi[resid - 1] += fraction * d_phi
        psi[resid - 1] += fraction * d_psi
    return phi, psi


def demo_channel(variant: str = "open") -> Atoms:
    """Build one state of the invented HalK channel (heavy atoms, about 2,200).

    Parameters
    ----------
    variant : {"open", "widened", "closed"}
        See the module docstring.

    Returns
    -------
    Atoms
        Four chains A-D; the pore axis is the z axis, the inner entrance at
        negative z. ``source`` names the model, e.g. ``"HalK open (invented)"``.

    Examples
    --------
    >>> from poreprobe.demo.channels import demo_channel
    >>> atoms = demo_channel("widened")
    >>> len(atoms), sorted(set(atoms.chain.tolist()))
    (2196, ['A', 'B', 'C', 'D'])
    """
    variant = check_choice(variant, "variant", VARIANTS)
    sequence = SEQUENCE
    rotamers = dict(_ROTAMERS_DEG)
    fraction = 0.0
    if variant == "widened":
        i = ENTRANCE_RESIDUE - 1
        sequence = sequence[:i] + "A" + sequence[i + 1 :]
        rotamers.pop(ENTRANCE_RESIDUE)
    elif variant == "closed":
        fraction = 1.0
        rotamers.update(_CLOSED_ROTAMERS_DEG)
    phi, psi = _hinge_dihedrals(fraction)
    atoms = _c4_copies(_subunit(sequence, phi, psi, rotamers))
    return replace(
        atoms, b_factor=_b_factors_A2(atoms), source=f"{CHANNEL_NAME} {variant} (invented)"
    )


def _b_factors_A2(atoms: Atoms) -> np.ndarray:
    loop = np.zeros(len(atoms), dtype=bool)
    for first, last in _LOOPS:
        loop |= (atoms.resid >= first) & (atoms.resid <= last)
    return np.round(15.0 + 0.5 * np.abs(atoms.coords_A[:, 2]) + 6.0 * loop, 2)


def demo_trajectory(n_frames: int = N_FRAMES) -> tuple[Atoms, np.ndarray]:
    """The invented breathing trajectory of the open channel.

    Frame k swings the inner helices about the hinge by the fraction
    ``BREATHING_AMPLITUDE * (1 - cos(4 pi k / n_frames)) / 2`` of the closed
    state's hinge change (two cycles), and displaces every atom by a random
    offset (normal, standard deviation ``JITTER_A`` per axis, fixed seed).

    Parameters
    ----------
    n_frames : int
        Number of frames (>= 1).

    Returns
    -------
    topology : Atoms
        The open model (same atoms, same order as every frame).
    coords_A : ndarray of shape (n_frames, n_atoms, 3)
        Coordinates of each frame (Å).
    """
    n_frames = check_int(n_frames, "n_frames", minimum=1)
    topology = demo_channel("open")
    rng = np.random.RandomState(_JITTER_SEED)  # legacy generator: stream frozen across numpy
    frames = np.empty((n_frames, len(topology), 3))
    for k in range(n_frames):
        fraction = BREATHING_AMPLITUDE * 0.5 * (1.0 - np.cos(4.0 * np.pi * k / n_frames))
        phi, psi = _hinge_dihedrals(fraction)
        chain = _subunit(SEQUENCE, phi, psi, _ROTAMERS_DEG)
        frames[k] = _c4_copies(chain).coords_A + rng.normal(0.0, JITTER_A, (len(topology), 3))
    return topology, frames


def breathing_fraction(n_frames: int = N_FRAMES) -> np.ndarray:
    """Hinge swing of each frame of :func:`demo_trajectory` (fraction of the closed state's)."""
    k = np.arange(check_int(n_frames, "n_frames", minimum=1))
    return BREATHING_AMPLITUDE * 0.5 * (1.0 - np.cos(4.0 * np.pi * k / len(k)))


def demo_universe(n_frames: int = N_FRAMES):
    """The breathing trajectory as an in-memory MDAnalysis ``Universe``."""
    from MDAnalysis.coordinates.memory import MemoryReader

    from poreprobe.io.cleaning import as_universe

    topology, frames = demo_trajectory(n_frames)
    universe = as_universe(topology)
    universe.load_new(frames.astype(np.float32), format=MemoryReader, dt=FRAME_TIME_PS)
    return universe


def _fixed(values: np.ndarray) -> np.ndarray:
    """Round to 0.001 Å and turn -0.000 into 0.000 (stable text)."""
    return np.round(values, 3) + 0.0


def _pdb_atom_name(name: str, element: str) -> str:
    if len(name) >= 4 or len(element) == 2:
        return f"{name:<4s}"
    return f" {name:<3s}"


def pdb_text(atoms: Atoms, *, title: str = "") -> str:
    """PDB text of a model with fixed formatting (ATOM, TER and END records).

    Parameters
    ----------
    atoms : Atoms
    title : str
        Written as TITLE and REMARK lines (no dates or versions, so the text is
        reproducible).
    """
    lines = []
    if title:
        lines.append(f"TITLE     {title[:70]}")
    lines.append("REMARK   1 INVENTED MODEL BUILT BY POREPROBE.DEMO; NOT AN EXPERIMENTAL STRUCTURE")
    xyz = _fixed(atoms.coords_A)
    serial = 0
    n = len(atoms)
    for i in range(n):
        serial += 1
        record = "ATOM  " if atoms.kind[i] == "polymer" else "HETATM"
        lines.append(
            f"{record}{serial:5d} {_pdb_atom_name(atoms.name[i], atoms.element[i])}"
            f"{atoms.altloc[i] or ' ':1s}{atoms.resname[i]:>3s} {atoms.chain[i]:1s}"
            f"{atoms.resid[i]:4d}{atoms.icode[i] or ' ':1s}   "
            f"{xyz[i, 0]:8.3f}{xyz[i, 1]:8.3f}{xyz[i, 2]:8.3f}"
            f"{atoms.occupancy[i]:6.2f}{atoms.b_factor[i]:6.2f}          "
            f"{atoms.element[i].capitalize():>2s}  "
        )
        if i == n - 1 or atoms.chain[i + 1] != atoms.chain[i]:
            serial += 1
            lines.append(
                f"TER   {serial:5d}      {atoms.resname[i]:>3s} {atoms.chain[i]:1s}"
                f"{atoms.resid[i]:4d}{atoms.icode[i] or ' ':1s}"
            )
    lines.append("END")
    return "\n".join(lines) + "\n"


def mmcif_text(atoms: Atoms, *, name: str = "HALK", title: str = "") -> str:
    """mmCIF text of a model with fixed formatting (entity, sequence and atom_site).

    Parameters
    ----------
    atoms : Atoms
        Protein chains of one identical sequence (as the demo models are).
    name : str
        The data block name and ``_entry.id``.
    title : str
        ``_struct.title``.
    """
    first = atoms.chain == atoms.chain[0]
    ca = first & (atoms.name == "CA")
    residues = list(zip(atoms.resid[ca].tolist(), atoms.resname[ca].tolist(), strict=True))
    chains = list(dict.fromkeys(atoms.chain.tolist()))
    out = [f"data_{name}", "#", f"_entry.id {name}", "#"]
    out.append(f"_struct.title '{title or 'invented model'}'")
    out += [
        "#",
        "_entity.id 1",
        "_entity.type polymer",
        f"_entity.pdbx_description '{CHANNEL_NAME} subunit (invented)'",
        "#",
    ]
    out += [
        "_entity_poly.entity_id 1",
        "_entity_poly.type polypeptide(L)",
        f"_entity_poly.pdbx_strand_id {','.join(chains)}",
        "#",
    ]
    out += [
        "loop_",
        "_entity_poly_seq.entity_id",
        "_entity_poly_seq.num",
        "_entity_poly_seq.mon_id",
    ]
    out += [f"1 {resid} {resname}" for resid, resname in residues]
    out += ["#", "loop_", "_struct_asym.id", "_struct_asym.entity_id"]
    out += [f"{chain} 1" for chain in chains]
    columns = (
        "group_PDB",
        "id",
        "type_symbol",
        "label_atom_id",
        "label_alt_id",
        "label_comp_id",
        "label_asym_id",
        "label_entity_id",
        "label_seq_id",
        "pdbx_PDB_ins_code",
        "Cartn_x",
        "Cartn_y",
        "Cartn_z",
        "occupancy",
        "B_iso_or_equiv",
        "auth_seq_id",
        "auth_asym_id",
        "pdbx_PDB_model_num",
    )
    out += ["#", "loop_"] + [f"_atom_site.{c}" for c in columns]
    xyz = _fixed(atoms.coords_A)
    for i in range(len(atoms)):
        out.append(
            f"ATOM {i + 1} {atoms.element[i].capitalize()} {atoms.name[i]} "
            f"{atoms.altloc[i] or '.'} {atoms.resname[i]} {atoms.chain[i]} 1 {atoms.resid[i]} "
            f"{atoms.icode[i] or '?'} {xyz[i, 0]:.3f} {xyz[i, 1]:.3f} {xyz[i, 2]:.3f} "
            f"{atoms.occupancy[i]:.2f} {atoms.b_factor[i]:.2f} {atoms.resid[i]} "
            f"{atoms.chain[i]} 1"
        )
    out.append("#")
    return "\n".join(out) + "\n"


def write_demo_files(folder, *, trajectory: bool = True) -> dict[str, str]:
    """Write the demo models (PDB and mmCIF) and the breathing trajectory (XTC), atomically.

    Parameters
    ----------
    folder : str or os.PathLike
        An existing folder.
    trajectory : bool
        Also write ``demo_breathing.xtc`` (topology: ``demo_channel.pdb``).

    Returns
    -------
    dict
        ``{"open.pdb": path, "open.cif": path, ..., "trajectory": path}``.
    """
    folder = os.fspath(folder)
    paths = {}
    for variant in VARIANTS:
        atoms = demo_channel(variant)
        stem = _FILE_STEMS[variant]
        title = f"{CHANNEL_NAME} {variant} state, an invented K+ channel (poreprobe demo)"
        for suffix, text in (
            ("pdb", pdb_text(atoms, title=title)),
            ("cif", mmcif_text(atoms, name=stem.upper(), title=title)),
        ):
            path = os.path.join(folder, f"{stem}.{suffix}")
            write_atomic(path, text)
            paths[f"{variant}.{suffix}"] = path
    if trajectory:
        paths["trajectory"] = write_trajectory(os.path.join(folder, TRAJECTORY_FILE))
    return paths


def write_trajectory(path, n_frames: int = N_FRAMES) -> str:
    """Write the breathing trajectory as XTC (0.01 Å precision), atomically."""
    import warnings

    import MDAnalysis

    path = os.fspath(path)
    universe = demo_universe(n_frames)
    with tempfile.TemporaryDirectory() as tmp:
        scratch = os.path.join(tmp, "frames.xtc")
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            with MDAnalysis.Writer(scratch, n_atoms=len(universe.atoms)) as writer:
                for _ in universe.trajectory:
                    writer.write(universe.atoms)
        with open(scratch, "rb") as fh:
            data = fh.read()
    write_atomic(path, data)
    return path
