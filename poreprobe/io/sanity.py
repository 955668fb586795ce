"""Checks on coordinates as they are read: non-finite or absurd values, duplicates, far atoms.

* :func:`check_coordinates` rejects NaN, infinite and absurdly large coordinates
  (beyond :data:`MAX_COORD_A` from the origin along any axis) with one line naming
  the first such atom: they are damaged files, not models.
* :func:`drop_duplicate_atoms` finds atoms that sit exactly on another atom (a
  second copy of the model superposed on the first, as a badly merged file holds);
  it keeps one of each and warns with the count, so the copies cannot pose as a
  symmetric partner.
* :func:`drop_far_atoms` drops small groups of atoms far from the body of the
  model (a misplaced ligand, a stray record thousands of Å away) and warns, so they
  cannot stretch the grids the profile and the scans lay around the model.
* :func:`frame_read_errors`, :func:`opens_alone` and :func:`collect_quietly` make a
  damaged trajectory one line that blames the right file.
"""

from __future__ import annotations

import contextlib
import struct
import warnings
from collections.abc import Iterator

import numpy as np

from poreprobe.errors import InputError, PoreprobeError, QualityWarning

#: Largest coordinate magnitude accepted (Å). Our choice: a hundred times the largest
#: assemblies deposited (common practice: models span at most a few thousand Å).
MAX_COORD_A = 1.0e5
#: Atoms closer than this (Å, per coordinate after rounding) count as one position;
#: PDB and mmCIF store 0.001 Å.
DUPLICATE_TOLERANCE_A = 1.0e-3
#: Cell size (Å) of the connectivity test of :func:`drop_far_atoms`: groups of atoms
#: separated from the rest by gaps wider than this are "far" (our choice).
FAR_GAP_A = 15.0
#: A far group is dropped when it holds fewer atoms than this fraction of the largest.
FAR_GROUP_FRACTION = 0.1


def atom_label(atoms, index: int) -> str:
    """``"A:LEU44 CA (atom 12)"``: chain, residue, atom name and 1-based position."""
    i = int(index)
    return (
        f"{atoms.chain[i]}:{atoms.resname[i]}{atoms.resid[i]}{atoms.icode[i]} "
        f"{atoms.name[i]} (atom {i + 1})"
    )


def check_coordinates(atoms, where: str = "") -> None:
    """Raise :class:`InputError` on the first non-finite or absurd coordinate.

    Parameters
    ----------
    atoms : Atoms
    where : str
        What to name in the message (the file; default ``atoms.source``).
    """
    coords = np.asarray(atoms.coords_A, dtype=float)
    where = where or atoms.source or "the model"
    finite = np.isfinite(coords).all(axis=1)
    if not finite.all():
        i = int(np.flatnonzero(~finite)[0])
        raise InputError(
            f"{where}: atom {atom_label(atoms, i)} has a non-finite coordinate "
            f"({', '.join(f'{v:g}' for v in coords[i])}); the file is damaged"
        )
    big = (np.abs(coords) > MAX_COORD_A).any(axis=1)
    if big.any():
        i = int(np.flatnonzero(big)[0])
        raise InputError(
            f"{where}: atom {atom_label(atoms, i)} lies at "
            f"({', '.join(f'{v:.4g}' for v in coords[i])}) Å, beyond ±{MAX_COORD_A:g} Å; "
            "the file is damaged"
        )


def duplicate_mask(coords_A: np.ndarray, tolerance_A: float = DUPLICATE_TOLERANCE_A) -> np.ndarray:
    """True for every atom whose position repeats an earlier atom's (within ``tolerance_A``)."""
    coords = np.asarray(coords_A, dtype=float)
    if len(coords) < 2:
        return np.zeros(len(coords), dtype=bool)
    keys = np.round(coords / tolerance_A).astype(np.int64)
    _, first = np.unique(keys, axis=0, return_index=True)
    dup = np.ones(len(coords), dtype=bool)
    dup[first] = False
    return dup


def drop_duplicate_atoms(atoms):
    """Keep one atom per position; warn (QualityWarning) with the count when any repeat."""
    dup = duplicate_mask(atoms.coords_A)
    n = int(dup.sum())
    if not n:
        return atoms
    note = (
        f"{n} atoms sit exactly on another atom (a duplicated copy of the model?); "
        "kept the first of each"
    )
    warnings.warn(f"{atoms.source}: {note}", QualityWarning, stacklevel=3)
    return atoms.subset(~dup, note)


def far_atom_mask(
    coords_A: np.ndarray, gap_A: float = FAR_GAP_A, fraction: float = FAR_GROUP_FRACTION
) -> np.ndarray:
    """True for atoms in small groups separated from the body of the model.

    Atoms are binned in cubic cells of ``gap_A``; cells that touch (26 neighbours)
    form groups. Groups holding fewer than ``fraction`` times the atoms of the
    largest group are far.
    """
    coords = np.asarray(coords_A, dtype=float)
    if len(coords) < 2:
        return np.zeros(len(coords), dtype=bool)
    cells = np.floor(coords / gap_A).astype(np.int64)
    uniq, inverse, counts = np.unique(cells, axis=0, return_inverse=True, return_counts=True)
    inverse = np.ravel(inverse)
    if len(uniq) == 1:
        return np.zeros(len(coords), dtype=bool)
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components
    from scipy.spatial import cKDTree

    pairs = cKDTree(uniq).query_pairs(r=np.sqrt(3.0) + 1e-6, output_type="ndarray")
    graph = coo_matrix(
        (np.ones(len(pairs)), (pairs[:, 0], pairs[:, 1])), shape=(len(uniq), len(uniq))
    )
    _, label = connected_components(graph, directed=False)
    group_size = np.bincount(label, weights=counts)
    small = group_size < fraction * group_size.max()
    return small[label[inverse]]


def drop_far_atoms(atoms):
    """Drop small groups of atoms far from the rest (see :func:`far_atom_mask`), warning."""
    far = far_atom_mask(atoms.coords_A)
    n = int(far.sum())
    if not n:
        return atoms
    first = atom_label(atoms, int(np.flatnonzero(far)[0]))
    note = (
        f"ignored {n} atoms far (gap > {FAR_GAP_A:g} Å) from the rest of the model, first {first}"
    )
    warnings.warn(f"{atoms.source}: {note}", QualityWarning, stacklevel=3)
    return atoms.subset(~far, note)


@contextlib.contextmanager
def frame_read_errors(path: str) -> Iterator[None]:
    """Turn the errors of reading trajectory frames into one :class:`InputError` naming ``path``.

    Models or frames with different atom counts (MDAnalysis refuses them) and
    truncated or damaged frames become one line; poreprobe's own errors pass.
    """
    try:
        yield
    except PoreprobeError:
        raise
    except ValueError as exc:
        text = " ".join(str(exc).split())
        if "number of atoms" not in text:
            raise
        raise InputError(
            f"{path}: its models or frames do not all hold the same atoms "
            f"({text.split(': ', 1)[-1].split('. ')[0]}); give a file whose frames match"
        ) from None
    except (OSError, EOFError, struct.error) as exc:
        text = " ".join(str(exc).split()) or type(exc).__name__
        raise InputError(f"cannot read the frames of {path}: {text}") from None


def opens_alone(path: str) -> bool:
    """Does the topology open on its own? (Then a failure with a trajectory is the trajectory's.)"""
    import warnings

    import MDAnalysis as mda

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            mda.Universe(path)
    except Exception:  # noqa: BLE001 - any failure means the topology is to blame
        collect_quietly()
        return False
    return True


def collect_quietly() -> None:
    """Garbage-collect without the 'Exception ignored in __del__' noise of broken readers."""
    import gc
    import sys

    hook = sys.unraisablehook
    sys.unraisablehook = lambda unraisable: None
    try:
        gc.collect()
    finally:
        sys.unraisablehook = hook
