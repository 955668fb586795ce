"""Reading channel models into one flat atom table.

PDB and mmCIF files (plain or gzipped) are read with gemmi; anything else that
MDAnalysis understands (PSF + DCD/XYZ, GRO, XYZ, multi-frame PDB, ...) is read
through an MDAnalysis ``Universe``. Both end up as an :class:`Atoms` table.

Default cleaning: polymer (protein) atoms only; waters, ions and other hetero
groups are dropped and the counts are recorded in ``Atoms.notes``. Alternate
locations keep, per atom, the copy with the highest occupancy (ties: the first
listed).
"""

from __future__ import annotations

import logging
import os
from dataclasses import dataclass, field, fields, replace

import numpy as np

from poreprobe._validate import as_coords_A, check_int
from poreprobe.errors import InputError

log = logging.getLogger("poreprobe")

GEMMI_SUFFIXES = (".pdb", ".ent", ".cif", ".mmcif", ".pdb.gz", ".ent.gz", ".cif.gz", ".mmcif.gz")
WATER_NAMES = frozenset(
    {"HOH", "WAT", "H2O", "DOD", "SOL", "TIP", "TIP3", "TIP4", "TIP5", "SPC", "T3P", "T4P", "OH2"}
)
ION_ELEMENTS = frozenset(
    {
        "LI",
        "NA",
        "K",
        "RB",
        "CS",
        "MG",
        "CA",
        "SR",
        "BA",
        "ZN",
        "MN",
        "FE",
        "CO",
        "NI",
        "CU",
        "CD",
        "HG",
        "CL",
        "BR",
        "I",
        "F",
        "TL",
        "AG",
    }
)
KINDS = ("polymer", "water", "ion", "hetero")

_ARRAY_FIELDS = (
    "coords_A",
    "element",
    "name",
    "resname",
    "resid",
    "icode",
    "chain",
    "altloc",
    "occupancy",
    "b_factor",
    "kind",
)


@dataclass(frozen=True)
class Atoms:
    """A flat, read-only table of atoms.

    Attributes
    ----------
    coords_A : ndarray of shape (n, 3)
        Cartesian coordinates in Å (float64).
    element : ndarray of str, shape (n,)
        Upper-case element symbols (``"C"``, ``"ZN"``).
    name, resname, icode, chain, altloc : ndarray of str, shape (n,)
        Atom name, residue name, insertion code, chain id, alternate location
        (``""`` where none).
    resid : ndarray of int, shape (n,)
        Residue numbers.
    occupancy, b_factor : ndarray of float, shape (n,)
        Occupancy (0-1) and B-factor (Å²).
    kind : ndarray of str, shape (n,)
        ``"polymer"``, ``"water"``, ``"ion"`` or ``"hetero"``.
    source : str
        Where the atoms came from (file name or description).
    altloc_policy : str
        How alternate locations were resolved.
    notes : tuple of str
        What was dropped or changed while reading.
    """

    coords_A: np.ndarray
    element: np.ndarray
    name: np.ndarray
    resname: np.ndarray
    resid: np.ndarray
    icode: np.ndarray
    chain: np.ndarray
    altloc: np.ndarray
    occupancy: np.ndarray
    b_factor: np.ndarray
    kind: np.ndarray
    source: str = ""
    altloc_policy: str = "occupancy"
    notes: tuple[str, ...] = field(default_factory=tuple)

    def __post_init__(self):
        n = len(self.coords_A)
        for fname in _ARRAY_FIELDS:
            arr = getattr(self, fname)
            if len(arr) != n:
                raise InputError(f"Atoms.{fname} has {len(arr)} entries, coords_A has {n}")
            arr.setflags(write=False)

    def __len__(self) -> int:
        return len(self.coords_A)

    @property
    def is_hydrogen(self) -> np.ndarray:
        """Boolean mask of hydrogen (and deuterium) atoms."""
        return np.isin(self.element, ("H", "D"))

    def subset(self, which, note: str | None = None) -> Atoms:
        """Return the atoms selected by a boolean mask or index array."""
        idx = np.asarray(which)
        parts = {f: getattr(self, f)[idx] for f in _ARRAY_FIELDS}
        notes = self.notes + ((note,) if note else ())
        return replace(self, **parts, notes=notes)

    def with_coords(self, coords_A) -> Atoms:
        """Return a copy with new coordinates (same atoms, same order)."""
        coords = as_coords_A(coords_A)
        if coords.shape != self.coords_A.shape:
            raise InputError(f"coords_A must have shape {self.coords_A.shape}, got {coords.shape}")
        return replace(self, coords_A=coords)

    def residue_labels(self) -> np.ndarray:
        """Per-atom residue label ``"A:LEU12"`` (chain, name, number, insertion code)."""
        return np.char.add(
            np.char.add(np.char.add(self.chain.astype(str), ":"), self.resname.astype(str)),
            np.char.add(self.resid.astype(str), self.icode.astype(str)),
        )

    def to_dict(self) -> dict:
        """Summary (not the coordinates) for reports."""
        return {
            "source": self.source,
            "n_atoms": len(self),
            "altloc_policy": self.altloc_policy,
            "notes": list(self.notes),
        }


def concatenate_atoms(parts, *, source: str | None = None) -> Atoms:
    """Join several :class:`Atoms` tables in order (metadata from the first)."""
    parts = list(parts)
    if not parts:
        raise InputError("concatenate_atoms needs at least one Atoms table")
    merged = {f: np.concatenate([getattr(p, f) for p in parts]) for f in _ARRAY_FIELDS}
    extra = {} if source is None else {"source": source}
    return replace(parts[0], **merged, **extra)


def make_atoms(
    coords_A,
    *,
    element=None,
    name=None,
    resname=None,
    resid=None,
    chain=None,
    icode=None,
    altloc=None,
    occupancy=None,
    b_factor=None,
    kind=None,
    source: str = "arrays",
    altloc_policy: str = "occupancy",
    notes: tuple[str, ...] = (),
) -> Atoms:
    """Build :class:`Atoms` from arrays; missing columns get neutral defaults.

    Parameters
    ----------
    coords_A : array_like of shape (n, 3)
        Coordinates in Å.
    element : array_like of str, optional
        Element symbols; default carbon for every atom.
    name, resname, resid, chain, icode, altloc, occupancy, b_factor, kind : array_like, optional
        Per-atom columns (see :class:`Atoms`).

    Returns
    -------
    Atoms
    """
    coords = as_coords_A(coords_A)
    n = len(coords)

    def col(values, default, dtype):
        if values is None:
            return np.full(n, default, dtype=dtype)
        arr = np.asarray(values, dtype=dtype)
        if arr.shape != (n,):
            raise InputError(f"expected {n} values per column, got shape {arr.shape}")
        return arr.copy()

    elem = np.char.upper(np.char.strip(col(element, "C", object).astype(str)))
    return Atoms(
        coords_A=coords.copy(),
        element=elem,
        name=col(name, "X", object).astype(str),
        resname=col(resname, "UNK", object).astype(str),
        resid=col(resid, 1, np.int64),
        icode=col(icode, "", object).astype(str),
        chain=col(chain, "A", object).astype(str),
        altloc=col(altloc, "", object).astype(str),
        occupancy=col(occupancy, 1.0, np.float64),
        b_factor=col(b_factor, 0.0, np.float64),
        kind=col(kind, "polymer", object).astype(str),
        source=source,
        altloc_policy=altloc_policy,
        notes=tuple(notes),
    )


def _is_gemmi_file(path: str) -> bool:
    return path.lower().endswith(GEMMI_SUFFIXES)


def _fixed_strings(raw: np.ndarray) -> np.ndarray:
    """Turn gemmi's (n, 8) int8 character arrays into a str array."""
    raw = np.ascontiguousarray(raw, dtype=np.uint8)
    return raw.view(f"S{raw.shape[1]}").ravel().astype(str)


def _read_gemmi(path: str, model: int) -> tuple[Atoms, int]:
    import gemmi

    try:
        st = gemmi.read_structure(path)
    except (RuntimeError, OSError, ValueError) as exc:
        raise InputError(f"cannot read {path}: {exc}") from exc
    if len(st) == 0:
        raise InputError(f"{path} holds no models (is it a structure file?)")
    if not 0 <= model < len(st):
        raise InputError(f"model must be between 0 and {len(st) - 1} for {path}, got {model}")
    st.setup_entities()
    n_models = len(st)
    keep = st[model].num
    for idx in range(n_models - 1, -1, -1):
        if st[idx].num != keep:
            del st[idx]
    flat = gemmi.FlatStructure(st)
    if len(flat.pos) == 0:
        raise InputError(f"{path} holds no atoms")
    element = np.char.upper(np.asarray(flat.element_names).astype(str))
    resname = _fixed_strings(flat.residue_names)
    entity = np.asarray(flat.entity_type)
    kind = np.full(len(element), "hetero", dtype=object)
    kind[entity == gemmi.EntityType.Polymer.value] = "polymer"
    water = (entity == gemmi.EntityType.Water.value) | np.isin(resname, list(WATER_NAMES))
    kind[water] = "water"
    altloc = np.asarray(flat.altlocs).astype(np.uint8)
    icode = np.asarray(flat.icodes).astype(np.uint8)
    atoms = Atoms(
        coords_A=np.array(flat.pos, dtype=np.float64),
        element=element,
        name=_fixed_strings(flat.atom_names),
        resname=resname,
        resid=np.asarray(flat.resnums, dtype=np.int64),
        icode=np.char.strip(icode.view("S1").astype(str)),
        chain=_fixed_strings(flat.chain_ids),
        altloc=np.char.strip(altloc.view("S1").astype(str)),
        occupancy=np.asarray(flat.occ, dtype=np.float64),
        b_factor=np.asarray(flat.b_iso, dtype=np.float64),
        kind=kind.astype(str),
        source=os.path.basename(path),
    )
    return _mark_ions(atoms), n_models


def _mark_ions(atoms: Atoms) -> Atoms:
    """Relabel single-atom non-polymer residues of ion elements as ``"ion"``."""
    nonpoly = atoms.kind != "polymer"
    if not nonpoly.any():
        return atoms
    key = np.char.add(
        np.char.add(atoms.chain, "|"), np.char.add(atoms.resid.astype(str), atoms.resname)
    )
    _, inverse, counts = np.unique(key, return_inverse=True, return_counts=True)
    single = counts[inverse] == 1
    ion = nonpoly & single & np.isin(atoms.element, list(ION_ELEMENTS))
    if not ion.any():
        return atoms
    kind = atoms.kind.copy()
    kind[ion] = "ion"
    return replace(atoms, kind=kind)


def _guess_element(name: str, resname: str) -> str:
    letters = "".join(ch for ch in name if ch.isalpha()).upper()
    if not letters:
        return "X"
    if letters == resname.upper() and letters in ION_ELEMENTS:
        return letters
    return letters[0]


def atoms_from_atomgroup(ag, *, source: str = "AtomGroup") -> Atoms:
    """Convert an MDAnalysis ``AtomGroup`` (current frame) into :class:`Atoms`.

    Parameters
    ----------
    ag : MDAnalysis.core.groups.AtomGroup
        The atoms; their positions at the Universe's current frame are used.
    source : str
        Label recorded in ``Atoms.source``.

    Returns
    -------
    Atoms
    """
    n = len(ag)
    if n == 0:
        raise InputError("the atom group is empty")

    def attr(name, default):
        try:
            vals = np.asarray(getattr(ag, name))
        except (AttributeError, ValueError):  # NoDataError is an AttributeError
            return np.full(n, default)
        return vals if len(vals) == n else np.full(n, default)

    names = attr("names", "X").astype(str)
    resnames = attr("resnames", "UNK").astype(str)  # bare XYZ files have no residues

    element = np.char.upper(attr("elements", "").astype(str))
    missing = element == ""
    if missing.any():
        element[missing] = [
            _guess_element(a, r) for a, r in zip(names[missing], resnames[missing], strict=True)
        ]
    chain = attr("chainIDs", "").astype(str)
    if (chain == "").all():
        chain = attr("segids", "A").astype(str)
    from MDAnalysis.core.selection import ProteinSelection

    protein_names = set(ProteinSelection.prot_res)
    kind = np.where(np.isin(resnames, list(protein_names)), "polymer", "hetero").astype(object)
    kind[np.isin(np.char.upper(resnames), list(WATER_NAMES))] = "water"
    resids = attr("resids", 1).astype(np.int64)
    kind = _adopt_caps(kind, chain, resids)
    positions = np.array(ag.positions, dtype=np.float64)
    if not np.isfinite(positions).all():  # one line naming the atom (and the frame)
        i = int(np.flatnonzero(~np.isfinite(positions).all(axis=1))[0])
        frame = getattr(getattr(ag.universe.trajectory, "ts", None), "frame", None)
        raise InputError(
            f"{source}{'' if frame is None else f', frame {frame}'}: atom {chain[i]}:"
            f"{resnames[i]}{resids[i]} {names[i]} (atom {i + 1}) has a non-finite coordinate"
        )
    atoms = Atoms(
        coords_A=positions,
        element=element,
        name=names,
        resname=resnames,
        resid=resids,
        icode=np.char.strip(attr("icodes", "").astype(str)),
        chain=chain,
        altloc=np.char.strip(attr("altLocs", "").astype(str)),
        occupancy=attr("occupancies", 1.0).astype(np.float64),
        b_factor=attr("tempfactors", 0.0).astype(np.float64),
        kind=kind.astype(str),
        source=source,
    )
    return _mark_ions(atoms)


def _adopt_caps(kind: np.ndarray, chain: np.ndarray, resids: np.ndarray) -> np.ndarray:
    """Count terminal caps (ACE, NME, formyl, ethanolamine, ...) as polymer.

    A non-water residue is adopted when its chain holds protein residues and its
    number lies within one of the chain's protein residue range.
    """
    kind = kind.copy()
    for ch in np.unique(chain):
        in_chain = chain == ch
        prot = in_chain & (kind == "polymer")
        if not prot.any():
            continue
        low, high = resids[prot].min() - 1, resids[prot].max() + 1
        adopt = in_chain & (kind == "hetero") & (resids >= low) & (resids <= high)
        kind[adopt] = "polymer"
    return kind


def open_universe(path: str, trajectory: str | None = None):
    """Open ``path`` (and an optional trajectory) as an MDAnalysis Universe."""
    import MDAnalysis as mda

    args = [path] + ([trajectory] if trajectory else [])
    try:
        import warnings

        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            return mda.Universe(*args)
    except Exception as exc:  # MDAnalysis raises many types for unreadable files
        msg = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
        from poreprobe.io.sanity import collect_quietly, opens_alone

        collect_quietly()  # half-built readers complain from __del__ otherwise
        culprit = path if trajectory is None or not opens_alone(path) else trajectory
        raise InputError(f"cannot read {culprit}: {msg}") from exc


def read_structure(
    path,
    *,
    trajectory: str | None = None,
    model: int = 0,
    frame: int = 0,
    altloc: str = "occupancy",
    hydrogens: bool = True,
    waters: bool = False,
    ions: bool = False,
    hetero: bool = False,
    selection: str | None = None,
) -> Atoms:
    """Read a channel model into :class:`Atoms`.

    Parameters
    ----------
    path : str or os.PathLike
        PDB or mmCIF (optionally ``.gz``), read with gemmi; any other format
        MDAnalysis reads (GRO, PSF, XYZ, ...) goes through MDAnalysis.
    trajectory : str, optional
        Coordinates file for a topology-only ``path`` (e.g. PSF + DCD/XYZ).
    model : int
        0-based model index of a multi-model PDB/mmCIF file.
    frame : int
        0-based frame of an MDAnalysis trajectory.
    altloc : {"occupancy", "first"} or a letter
        Alternate-location policy, see :func:`resolve_altlocs`.
    hydrogens, waters, ions, hetero : bool
        Which atom kinds to keep (default: polymer atoms with hydrogens).
    selection : str, optional
        MDAnalysis selection applied after cleaning.

    Returns
    -------
    Atoms

    Raises
    ------
    InputError
        If the file is missing, unreadable, holds no atoms, or nothing is left
        after cleaning and selection.

    Examples
    --------
    >>> import poreprobe
    >>> from poreprobe.demo.run import demo_path
    >>> atoms = poreprobe.read_structure(demo_path("demo_channel", "pdb"))
    >>> len(atoms), atoms.source
    (2220, 'demo_channel.pdb')
    """
    # cleaning works on Atoms, so it imports this module; import it here, not at the top
    from poreprobe.io import sanity
    from poreprobe.io.cleaning import check_altloc, clean, resolve_altlocs, select

    path = os.fspath(path)
    if os.path.isdir(path):
        raise InputError(f"cannot read {path}: it is a directory, not a file")
    if not os.path.isfile(path):
        raise InputError(f"no such file: {path}")
    if os.path.getsize(path) == 0:
        raise InputError(f"{path} is empty")
    model = check_int(model, "model", minimum=0)
    frame = check_int(frame, "frame", minimum=0)
    check_altloc(altloc)
    if _is_gemmi_file(path) and trajectory is None:
        atoms, _ = _read_gemmi(path, model)
    else:
        universe = open_universe(path, trajectory)
        n_frames = len(universe.trajectory)
        if not 0 <= frame < n_frames:
            raise InputError(f"frame must be between 0 and {n_frames - 1}, got {frame}")
        universe.trajectory[frame]
        if len(universe.atoms) == 0:
            raise InputError(f"{path} holds no atoms")
        atoms = atoms_from_atomgroup(universe.atoms, source=os.path.basename(path))
    sanity.check_coordinates(atoms, path)
    atoms = sanity.drop_duplicate_atoms(resolve_altlocs(atoms, altloc))
    atoms = clean(atoms, hydrogens=hydrogens, waters=waters, ions=ions, hetero=hetero)
    if len(atoms) == 0:
        raise InputError(f"no atoms left in {path} after cleaning (try keeping hetero groups)")
    if selection:
        atoms = select(atoms, selection)
    return sanity.drop_far_atoms(atoms)


def atoms_field_names() -> tuple[str, ...]:
    """Names of the per-atom columns of :class:`Atoms`."""
    return tuple(f.name for f in fields(Atoms) if f.name in _ARRAY_FIELDS)
