"""Named van der Waals radius sets and per-atom radius assignment.

Sets
----
``"bondi"`` (default)
    Bondi, A. (1964). van der Waals volumes and radii. *J. Phys. Chem.* 68,
    441-451, Table I. The same values are carried by gemmi's element table,
    which the tests use as a cross-check.
``"alvarez"``
    Alvarez, S. (2013). A cartography of the van der Waals territories.
    *Dalton Trans.* 42, 8617-8636, Table 1 (values for H, C, N, O, P, S, Se).
    Elements it does not list fall back to Bondi (with a warning).

User overrides come from a TOML file::

    [elements]          # element symbol -> radius in Å
    C = 1.75
    [residues.LYS]      # atom name -> radius in Å, for this residue name
    NZ = 1.60
    [residues."*"]      # atom name -> radius in Å, in any residue
    OXT = 1.52

Every radius is a TOML number (a boolean or a string is an error) in (0, 5] Å.
Precedence: a ``[residues.NAME]`` entry, then ``[residues."*"]``, then
``elements``, then the named set, then the fallback. Fallback for an element
the set does not list: the Bondi value, else gemmi's tabulated radius for that
element, else 1.80 Å; every fallback raises a :class:`QualityWarning`. A radius
is never silently zero.
"""

from __future__ import annotations

import os
import tomllib
import warnings
from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from poreprobe.errors import InputError, QualityWarning

#: Bondi 1964, Table I (Å).
_BONDI = {
    "H": 1.20,
    "HE": 1.40,
    "C": 1.70,
    "N": 1.55,
    "O": 1.52,
    "F": 1.47,
    "NE": 1.54,
    "SI": 2.10,
    "P": 1.80,
    "S": 1.80,
    "CL": 1.75,
    "AR": 1.88,
    "AS": 1.85,
    "SE": 1.90,
    "BR": 1.85,
    "KR": 2.02,
    "TE": 2.06,
    "I": 1.98,
    "XE": 2.16,
    "LI": 1.82,
    "NA": 2.27,
    "K": 2.75,
    "MG": 1.73,
    "NI": 1.63,
    "CU": 1.40,
    "ZN": 1.39,
    "GA": 1.87,
    "PD": 1.63,
    "AG": 1.72,
    "CD": 1.58,
    "IN": 1.93,
    "SN": 2.17,
    "AU": 1.66,
    "HG": 1.55,
    "TL": 1.96,
    "PB": 2.02,
    "U": 1.86,
}
_BONDI["D"] = _BONDI["H"]

#: Alvarez 2013, Table 1 (Å), the elements of biomolecules.
_ALVAREZ = {"H": 1.20, "C": 1.77, "N": 1.66, "O": 1.50, "P": 1.90, "S": 1.89, "SE": 1.82}
_ALVAREZ["D"] = _ALVAREZ["H"]

RADIUS_SETS: dict[str, dict[str, float]] = {"bondi": _BONDI, "alvarez": _ALVAREZ}
RADIUS_SET_SOURCES = {
    "bondi": "Bondi 1964, J. Phys. Chem. 68:441, Table I",
    "alvarez": "Alvarez 2013, Dalton Trans. 42:8617, Table 1",
}
DEFAULT_RADIUS_SET = "bondi"
FALLBACK_RADIUS_A = 1.80


@dataclass(frozen=True)
class RadiusSet:
    """A radius set: a named table plus optional user overrides.

    Attributes
    ----------
    name : str
        Label recorded in results, e.g. ``"bondi"`` or ``"bondi+user.toml"``.
    by_element : dict
        Element symbol (upper case) -> radius in Å.
    by_atom : dict
        ``"RESNAME:ATOMNAME"`` (``"*"`` for any residue) -> radius in Å.
    source : str
        Citation of the base table.
    """

    name: str
    by_element: Mapping[str, float]
    by_atom: Mapping[str, float] = field(default_factory=dict)
    source: str = ""


#: Radii a user file may give (Å): above 0, at most 5 (the largest van der Waals radius
#: of any element in the tables above is below 3 Å; 5 catches unit slips such as nm x 10).
MAX_USER_RADIUS_A = 5.0


def _checked_radius(value, key: str, path: str) -> float:
    """A user radius: a real TOML number (int or float, not bool) in (0, 5] Å."""
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(
            f"radius file {path}: {key} must be a number in Å, got {type(value).__name__} {value!r}"
        )
    val = float(value)
    if not np.isfinite(val) or not 0 < val <= MAX_USER_RADIUS_A:
        raise InputError(
            f"radius file {path}: {key} = {value!r} is outside (0, {MAX_USER_RADIUS_A:g}] Å"
        )
    return val


def _table(data: Mapping, name: str, path: str) -> Mapping:
    table = data.get(name, {})
    if not isinstance(table, Mapping):
        raise InputError(f"radius file {path}: {name} must be a table ([{name}])")
    return table


def load_radius_overrides(path) -> tuple[dict[str, float], dict[str, float]]:
    """Read a TOML radius file into (by_element, by_atom) dictionaries.

    The file holds an ``[elements]`` table (symbol = radius in Å) and/or
    ``[residues.RESNAME]`` tables (atom name = radius in Å; ``[residues."*"]`` for
    any residue). Every radius must be a TOML number (not a boolean or a string)
    in (0, 5] Å. ``by_atom`` is keyed ``"RESNAME:ATOMNAME"`` (``"*:ATOMNAME"``).
    """
    path = os.fspath(path)
    try:
        with open(path, "rb") as fh:
            data = tomllib.load(fh)
    except FileNotFoundError as exc:
        raise InputError(f"no such radius file: {path}") from exc
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise InputError(f"radius file {path} is not valid TOML: {exc}") from exc
    if "atoms" in data:
        raise InputError(
            f"radius file {path}: the [atoms] table with 'RESNAME:ATOMNAME' keys is no "
            "longer read; write per-atom radii as [residues.LYS] NZ = 1.6 "
            '(any residue: [residues."*"])'
        )
    unknown = set(data) - {"elements", "residues"}
    if unknown:
        raise InputError(
            f"radius file {path}: unknown key(s) {sorted(unknown)}; "
            "use [elements] and [residues.RESNAME] tables"
        )
    by_element = {
        k.strip().upper(): _checked_radius(v, f"elements.{k}", path)
        for k, v in _table(data, "elements", path).items()
    }
    by_atom = {}
    for res, atoms in _table(data, "residues", path).items():
        if not isinstance(atoms, Mapping):
            raise InputError(
                f"radius file {path}: residues.{res} must be a table of atom names, "
                f"e.g. [residues.{res}] NZ = 1.6"
            )
        for atom, val in atoms.items():
            key = f"{res.strip().upper()}:{atom.strip().upper()}"
            by_atom[key] = _checked_radius(val, f"residues.{res}.{atom}", path)
    return by_element, by_atom


def get_radius_set(radii: str | RadiusSet = DEFAULT_RADIUS_SET, overrides=None) -> RadiusSet:
    """Resolve a radius-set name (and an optional TOML override file).

    Parameters
    ----------
    radii : str or RadiusSet
        ``"bondi"`` or ``"alvarez"``, or an existing :class:`RadiusSet`.
    overrides : path-like, optional
        TOML file with ``[elements]`` and/or ``[residues.RESNAME]`` tables.

    Returns
    -------
    RadiusSet
    """
    if isinstance(radii, RadiusSet):
        base = radii
    else:
        if not isinstance(radii, str) or radii.lower() not in RADIUS_SETS:
            raise InputError(f"radii must be one of {', '.join(RADIUS_SETS)}; got {radii!r}")
        key = radii.lower()
        base = RadiusSet(key, dict(RADIUS_SETS[key]), {}, RADIUS_SET_SOURCES[key])
    if overrides is None:
        return base
    by_element, by_atom = load_radius_overrides(overrides)
    return RadiusSet(
        f"{base.name}+{os.path.basename(os.fspath(overrides))}",
        {**base.by_element, **by_element},
        {**base.by_atom, **by_atom},
        base.source + "; user overrides",
    )


def _fallback_radius(element: str) -> tuple[float, str]:
    if element in _BONDI:
        return _BONDI[element], "Bondi 1964"
    try:
        import gemmi

        value = float(gemmi.Element(element.capitalize()).vdw_r)
        if gemmi.Element(element.capitalize()).atomic_number > 0 and value > 0:
            return round(value, 3), "gemmi element table"
    except (RuntimeError, ValueError):
        pass
    return FALLBACK_RADIUS_A, "default"


def atom_radii_A(
    atoms, radii: str | RadiusSet = DEFAULT_RADIUS_SET, *, overrides=None
) -> np.ndarray:
    """Per-atom van der Waals radii in Å.

    Parameters
    ----------
    atoms : Atoms
        Needs ``element``, ``resname`` and ``name``.
    radii : str or RadiusSet
        Named set (``"bondi"``, ``"alvarez"``) or a resolved :class:`RadiusSet`.
    overrides : path-like, optional
        TOML override file (see module docstring).

    Returns
    -------
    ndarray of shape (n,)
        Radii in Å, all > 0.

    Warns
    -----
    QualityWarning
        For each element the set does not list, naming the fallback used.
    """
    rset = get_radius_set(radii, overrides)
    elements = np.asarray(atoms.element).astype(str)
    out = np.empty(len(elements), dtype=np.float64)
    uniq, inverse = np.unique(elements, return_inverse=True)
    values = np.empty(len(uniq))
    for j, elem in enumerate(uniq):
        if elem in rset.by_element:
            values[j] = rset.by_element[elem]
        else:
            values[j], origin = _fallback_radius(elem)
            count = int((inverse == j).sum())
            warnings.warn(
                f"radius set {rset.name!r} has no radius for element {elem!r} "
                f"({count} atoms); using {values[j]:.2f} Å from {origin}",
                QualityWarning,
                stacklevel=2,
            )
    out[:] = values[inverse]
    if rset.by_atom:
        res = np.char.upper(np.asarray(atoms.resname).astype(str))
        names = np.char.upper(np.asarray(atoms.name).astype(str))
        exact = np.char.add(np.char.add(res, ":"), names)
        wild = np.char.add("*:", names)
        for key, value in rset.by_atom.items():
            target = wild if key.startswith("*:") else exact
            out[target == key] = value
        # exact residue matches take precedence over wildcards
        for key, value in rset.by_atom.items():
            if not key.startswith("*:"):
                out[exact == key] = value
    return out
