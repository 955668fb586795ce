"""Choosing atoms: alternate locations, the default cleaning, and MDAnalysis selections.

Default cleaning keeps polymer (protein) atoms; waters, ions and other hetero groups
are dropped, with the counts recorded in ``Atoms.notes``. Alternate locations keep,
per atom, the copy with the highest occupancy (ties: the first listed), the first
listed, or one letter. Selections use the MDAnalysis language on an
:class:`~poreprobe.io.structure.Atoms` table (through an in-memory ``Universe``).
"""

from __future__ import annotations

import logging
from dataclasses import replace

import numpy as np

from poreprobe._validate import check_choice
from poreprobe.errors import InputError
from poreprobe.io.structure import Atoms

log = logging.getLogger("poreprobe")

ALTLOC_POLICIES = ("occupancy", "first")


def resolve_altlocs(atoms: Atoms, policy: str = "occupancy") -> Atoms:
    """Keep one copy of each atom that has alternate locations.

    Parameters
    ----------
    atoms : Atoms
    policy : {"occupancy", "first"} or a single altloc letter
        ``"occupancy"`` keeps the copy with the highest occupancy (ties: first
        listed); ``"first"`` the first listed; a letter keeps that altloc (and the
        first listed copy where that letter is absent).

    Returns
    -------
    Atoms
        With ``altloc_policy`` recorded.
    """
    if not isinstance(policy, str) or not (policy in ALTLOC_POLICIES or len(policy) == 1):
        raise InputError(
            f"altloc must be 'occupancy', 'first' or one altloc letter, got {policy!r}"
        )
    keep, dropped = altloc_keep(atoms, policy)
    if not dropped:
        return replace(atoms, altloc_policy=policy)
    note = f"altlocs: kept one of each ({policy}), dropped {dropped} alternate atoms"
    return replace(atoms.subset(keep, note), altloc_policy=policy)


def altloc_keep(atoms: Atoms, policy: str) -> tuple[np.ndarray, int]:
    """Which atoms :func:`resolve_altlocs` keeps (a boolean mask) and how many it drops."""
    has_alt = atoms.altloc != ""
    present = set(atoms.altloc[has_alt].tolist())
    if policy not in ALTLOC_POLICIES and policy not in present:  # a letter the file lacks
        raise InputError(
            f"--altloc {policy}: the file has altlocs {', '.join(sorted(present))} only"
            if present
            else f"--altloc {policy}: {atoms.source or 'the file'} has no alternate locations"
        )
    if not has_alt.any():
        return np.ones(len(atoms), dtype=bool), 0
    idx = np.flatnonzero(has_alt)
    key = np.char.add(
        np.char.add(atoms.chain[idx], "|"),
        np.char.add(
            np.char.add(atoms.resid[idx].astype(str), atoms.icode[idx]),
            np.char.add("|", atoms.name[idx]),
        ),
    )
    if policy == "occupancy":
        primary = -atoms.occupancy[idx]
    elif policy == "first":
        primary = np.zeros(len(idx))
    else:
        primary = (atoms.altloc[idx] != policy).astype(float)
    order = np.lexsort((idx, primary, key))
    _, first = np.unique(key[order], return_index=True)
    chosen = idx[order[first]]
    keep = ~has_alt
    keep[chosen] = True
    return keep, int(len(idx) - len(chosen))


def select(atoms: Atoms, selection: str) -> Atoms:
    """Keep the atoms matched by an MDAnalysis selection string.

    Parameters
    ----------
    atoms : Atoms
    selection : str
        MDAnalysis selection language, e.g. ``"segid A B and not name H*"`` or
        ``"resid 100:120"``. Chains are exposed as both ``segid`` and ``chainID``.

    Returns
    -------
    Atoms

    Raises
    ------
    InputError
        If the selection is malformed or matches nothing.
    """
    idx = select_indices(atoms, selection)
    return atoms.subset(idx, f"selection {selection!r}: {len(idx)} atoms")


def select_indices(atoms: Atoms, selection: str) -> np.ndarray:
    """Indices of the atoms matched by an MDAnalysis selection string."""
    return np.asarray(select_in_universe(as_universe(atoms), selection).indices)


def select_in_universe(universe, selection: str):
    """``universe.select_atoms(selection)``, with one clear error for bad or empty selections."""
    if not isinstance(selection, str) or not selection.strip():
        raise InputError(f"selection must be a non-empty string, got {selection!r}")
    try:
        group = universe.select_atoms(selection)
    except Exception as exc:  # MDAnalysis raises SelectionError, ValueError, ...
        raise InputError(f"bad selection {selection!r}: {exc}") from exc
    if len(group) == 0:
        raise InputError(f"selection {selection!r} matches no atoms")
    return group


def as_universe(atoms: Atoms):
    import MDAnalysis as mda

    res_key = np.char.add(
        np.char.add(atoms.chain, "|"), np.char.add(atoms.resid.astype(str), atoms.icode)
    )
    change = np.r_[True, res_key[1:] != res_key[:-1]]
    atom_resindex = np.cumsum(change) - 1
    n_res = int(atom_resindex[-1]) + 1
    res_first = np.flatnonzero(change)
    seg_names, res_segindex = np.unique(atoms.chain[res_first], return_inverse=True)
    u = mda.Universe.empty(
        len(atoms),
        n_residues=n_res,
        n_segments=len(seg_names),
        atom_resindex=atom_resindex,
        residue_segindex=res_segindex,
        trajectory=True,
    )
    u.add_TopologyAttr("names", atoms.name)
    u.add_TopologyAttr("types", atoms.element)
    u.add_TopologyAttr("elements", [e.capitalize() for e in atoms.element])
    u.add_TopologyAttr("chainIDs", atoms.chain)
    u.add_TopologyAttr("altLocs", atoms.altloc)
    u.add_TopologyAttr("occupancies", atoms.occupancy)
    u.add_TopologyAttr("tempfactors", atoms.b_factor)
    u.add_TopologyAttr("resnames", atoms.resname[res_first])
    u.add_TopologyAttr("resids", atoms.resid[res_first])
    u.add_TopologyAttr("icodes", atoms.icode[res_first])
    u.add_TopologyAttr("segids", seg_names)
    u.atoms.positions = atoms.coords_A
    return u


def clean(
    atoms: Atoms,
    *,
    hydrogens: bool = True,
    waters: bool = False,
    ions: bool = False,
    hetero: bool = False,
) -> Atoms:
    """Drop atom kinds the pore calculation should not see, recording counts in ``notes``.

    Parameters
    ----------
    atoms : Atoms
    hydrogens, waters, ions, hetero : bool
        Keep hydrogens (default yes), waters, ions and other hetero groups
        (ligands, lipids, detergents; default no).
    """
    keep, notes = clean_keep(atoms, hydrogens=hydrogens, waters=waters, ions=ions, hetero=hetero)
    if keep.all():
        return atoms
    out = atoms.subset(keep)
    out = replace(out, notes=out.notes + tuple(notes))
    for note in notes:
        log.info("%s: %s", atoms.source, note)
    return out


def clean_keep(
    atoms: Atoms, *, hydrogens: bool, waters: bool, ions: bool, hetero: bool
) -> tuple[np.ndarray, list[str]]:
    """Which atoms :func:`clean` keeps (a boolean mask), with a note per dropped kind."""
    keep = np.ones(len(atoms), dtype=bool)
    notes = []
    for kind, wanted in (("water", waters), ("ion", ions), ("hetero", hetero)):
        mask = atoms.kind == kind
        if mask.any() and not wanted:
            keep &= ~mask
            notes.append(f"dropped {int(mask.sum())} {kind} atoms")
    if not hydrogens:
        mask = atoms.is_hydrogen & keep
        if mask.any():
            keep &= ~mask
            notes.append(f"dropped {int(mask.sum())} hydrogen atoms")
    return keep, notes


def cleaned_indices(
    atoms: Atoms,
    *,
    altloc: str = "occupancy",
    hydrogens: bool = True,
    waters: bool = False,
    ions: bool = False,
    hetero: bool = False,
    selection: str | None = None,
) -> np.ndarray:
    """Indices of the atoms :func:`read_structure` would keep with the same options.

    For readers that must keep their own atom order (a trajectory's frames): the
    same altloc policy, cleaning and selection, as indices into ``atoms``.
    """
    keep, _ = altloc_keep(atoms, check_altloc(altloc))
    more, _ = clean_keep(atoms, hydrogens=hydrogens, waters=waters, ions=ions, hetero=hetero)
    idx = np.flatnonzero(keep & more)
    if len(idx) == 0:
        raise InputError(f"no atoms left in {atoms.source} after cleaning (try --keep-hetero)")
    if selection:
        idx = idx[select_indices(atoms.subset(idx), selection)]
    return idx


def check_altloc(altloc) -> str:
    """The altloc policy, or InputError: 'occupancy', 'first' or one letter."""
    if altloc not in ALTLOC_POLICIES and not (isinstance(altloc, str) and len(altloc) == 1):
        check_choice(altloc, "altloc", (*ALTLOC_POLICIES, "<letter>"))
    return altloc
