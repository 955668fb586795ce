"""Charge states of titratable side chains from the Henderson-Hasselbalch equation.

For an acid group (Asp, Glu, Cys, Tyr) the mean charge at a pH is
``-1 / (1 + 10**(pKa - pH))``; for a base (His, Lys, Arg) it is
``+1 / (1 + 10**(pH - pKa))`` (Henderson-Hasselbalch; any biochemistry text). At
pH = pKa either is a half charge. The pKa values are those of free, unperturbed
groups: a real pore can shift them by several units (buried charges, neighbouring
charges, the membrane), which is why a user can fix any residue's charge state.

pKa tables
----------
* ``"grimsley2009"`` (default): the average pKa values measured in folded proteins,
  Grimsley, Scholtz and Pace 2009, Protein Sci. 18:247-251 (abstract and summary
  table: Asp 3.5, Glu 4.2, His 6.6, Cys 6.8, Tyr 10.3, Lys 10.5). The paper has no
  folded-protein value for Arg; the 12.04 used here is the Arg entry of the
  "Grimsley" set as tabulated by Kozlowski 2016, Biol. Direct 11:55 (doi
  10.1186/s13062-016-0159-9; volume and number from memory), Table 4. The
  numbers were read in transcriptions of that table (the pKa sets of open-source
  isoelectric-point calculators), not in the papers themselves.
* ``"thurlkill2006"``: model alanine pentapeptides, Thurlkill, Grimsley, Scholtz and
  Pace 2006, Protein Sci. 15:1214-1218 (Asp 3.67, Glu 4.25, His 6.54, Cys 8.55,
  Tyr 9.84, Lys 10.40; Arg 12.0 assumed in the same transcription, as the paper did
  not measure it). Same transcription as above; our recollection of the paper agrees.

Chain termini are left out: in deposited models a chain end is often where the
modelled part stops, not a real terminus. Disulfide-bonded cysteines (SG-SG within
2.5 Å, common practice) carry no charge. Force-field residue names that fix a
protonation state (``HIP`` +1, ``HID``/``HIE`` 0, ``ASH``/``GLH`` 0, ``LYN`` 0,
``CYX`` 0, ``CYM`` -1, ...) are honoured.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np
from scipy.spatial import cKDTree

from poreprobe._validate import check_choice, check_range
from poreprobe.errors import InputError
from poreprobe.io.residues import standard_name
from poreprobe.io.structure import Atoms

DEFAULT_PH = 7.0
DEFAULT_PKA_TABLE = "grimsley2009"
DISULFIDE_DISTANCE_A = 2.5

#: pKa tables: residue -> pKa, with their sources (see module docstring).
PKA_TABLES: dict[str, dict[str, float]] = {
    "grimsley2009": {
        "ASP": 3.5,
        "GLU": 4.2,
        "HIS": 6.6,
        "CYS": 6.8,
        "TYR": 10.3,
        "LYS": 10.5,
        "ARG": 12.04,
    },
    "thurlkill2006": {
        "ASP": 3.67,
        "GLU": 4.25,
        "HIS": 6.54,
        "CYS": 8.55,
        "TYR": 9.84,
        "LYS": 10.40,
        "ARG": 12.0,
    },
}
PKA_SOURCES = {
    "grimsley2009": "Grimsley, Scholtz & Pace 2009, Protein Sci. 18:247 (averages in folded "
    "proteins); Arg 12.04 from Kozlowski 2016, Biol. Direct 11:55, Table 4",
    "thurlkill2006": "Thurlkill, Grimsley, Scholtz & Pace 2006, Protein Sci. 15:1214 "
    "(alanine pentapeptides); Arg 12.0 assumed",
}

#: Sign of the charged form (-1 acid, +1 base) and the atoms that carry the charge.
TITRATABLE_GROUPS: dict[str, tuple[int, tuple[str, ...]]] = {
    "ASP": (-1, ("OD1", "OD2")),
    "GLU": (-1, ("OE1", "OE2")),
    "CYS": (-1, ("SG",)),
    "TYR": (-1, ("OH",)),
    "HIS": (1, ("ND1", "NE2")),
    "LYS": (1, ("NZ",)),
    "ARG": (1, ("NE", "NH1", "NH2")),
}

_SITE_ATOMS = frozenset(
    (res, name) for res, (_, names) in TITRATABLE_GROUPS.items() for name in names
)

#: Force-field names that fix a protonation state, and that charge (e).
FIXED_STATE_NAMES: dict[str, float] = {
    "HID": 0.0,
    "HIE": 0.0,
    "HSD": 0.0,
    "HSE": 0.0,
    "HISD": 0.0,
    "HISE": 0.0,
    "HIP": 1.0,
    "HSP": 1.0,
    "HISH": 1.0,
    "ASH": 0.0,
    "GLH": 0.0,
    "LYN": 0.0,
    "CYX": 0.0,
    "CYM": -1.0,
}


def hh_charge_e(sign, pKa, pH) -> np.ndarray:
    """Mean charge (e) of titratable groups from the Henderson-Hasselbalch equation.

    Parameters
    ----------
    sign : array_like of int
        -1 for acids (charged when deprotonated), +1 for bases.
    pKa, pH : array_like of float

    Returns
    -------
    ndarray of float
        ``-1/(1+10**(pKa-pH))`` for acids, ``+1/(1+10**(pH-pKa))`` for bases.

    Examples
    --------
    >>> float(hh_charge_e(-1, 4.0, 4.0)), float(hh_charge_e(1, 10.5, 10.5))
    (-0.5, 0.5)
    """
    sign = np.asarray(sign, dtype=float)
    if not np.isin(sign, (-1.0, 1.0)).all():
        raise InputError(f"sign must be -1 (acid) or +1 (base), got {sign}")
    pKa = np.asarray(pKa, dtype=float)
    pH = np.asarray(pH, dtype=float)
    if not (np.isfinite(pKa).all() and np.isfinite(pH).all()):
        raise InputError("pKa and pH must be finite")
    return sign / (1.0 + 10.0 ** (sign * (pH - pKa)))


def residue_charge_e(resname: str, pH: float, *, pka_table: str = DEFAULT_PKA_TABLE) -> float:
    """Mean side-chain charge (e) of one residue type at ``pH`` (0 if not titratable)."""
    table = PKA_TABLES[check_choice(pka_table, "pka_table", PKA_TABLES)]
    pH = check_range(pH, "pH", 0.0, 14.0)
    raw = str(resname).strip().upper()
    if raw in FIXED_STATE_NAMES:
        return FIXED_STATE_NAMES[raw]
    name = standard_name(raw)
    if name not in TITRATABLE_GROUPS:
        return 0.0
    return float(hh_charge_e(TITRATABLE_GROUPS[name][0], table[name], pH))


_OVERRIDE = re.compile(r"^(?:(?P<chain>[^:=]+):)?(?P<resname>[A-Za-z]{3,4})?(?P<resid>-?\d+)?$")


def parse_charge_states(items) -> dict[str, float]:
    """Parse ``["A:GLU71=0", "HIS=1", "ASP80=-1"]`` into an override mapping.

    A key is a residue type (``HIS``: every histidine), a type and number
    (``GLU71``: that residue in every chain) or a chain, type and number
    (``A:GLU71``); the value is its charge in e, between -1 and +1 (fractions allowed).
    """
    out: dict[str, float] = {}
    for item in items or ():
        key, sep, value = str(item).partition("=")
        key = key.strip().upper()
        m = _OVERRIDE.match(key)
        if not sep or not key or m is None or m.group("resname") is None:
            raise InputError(
                f"charge state must look like HIS=1, GLU71=0 or A:GLU71=-1, got {item!r}"
            )
        out[key] = check_range(value, f"charge of {key}", -1.0, 1.0)
    return out


@dataclass(frozen=True)
class TitratableSites:
    """The charged groups of a model at one pH: where they sit and what they carry.

    Attributes
    ----------
    position_A : ndarray of shape (m, 3)
        Centroid of each group's charge-carrying atoms (Å).
    charge_e : ndarray of shape (m,)
        Mean charge (e).
    label : ndarray of str, shape (m,)
        Residue labels ``"A:GLU71"``.
    resname : ndarray of str, shape (m,)
    pka : ndarray of shape (m,)
        pKa used (NaN where the state was fixed by an override, a residue name or a
        disulfide).
    state : ndarray of str, shape (m,)
        ``"pH"``, ``"override"``, ``"residue name"`` or ``"disulfide"``.
    pH : float
    pka_table, pka_source : str
    """

    position_A: np.ndarray
    charge_e: np.ndarray
    label: np.ndarray
    resname: np.ndarray
    pka: np.ndarray
    state: np.ndarray
    pH: float
    pka_table: str
    pka_source: str

    def __post_init__(self):
        for name in ("position_A", "charge_e", "label", "resname", "pka", "state"):
            getattr(self, name).setflags(write=False)

    def charge_of(self) -> dict[str, float]:
        """Residue label -> charge (e)."""
        return dict(zip(self.label.tolist(), self.charge_e.tolist(), strict=True))

    def summary(self) -> dict:
        """Counts and net charge by how each state was set, and the fixed residues."""
        states = {}
        for st in ("pH", "override", "residue name", "disulfide"):
            here = self.state == st
            states[st] = {"count": int(here.sum()), "charge_e": float(self.charge_e[here].sum())}
        fixed = self.state != "pH"
        return {
            "n_sites": len(self.charge_e),
            "net_charge_e": float(self.charge_e.sum()),
            "by_state": states,
            "fixed": dict(
                zip(self.label[fixed].tolist(), self.charge_e[fixed].tolist(), strict=True)
            ),
            "note": "every titratable side chain of the model (charge-carrying atoms present); "
            "chain termini not counted",
        }

    def to_dict(self) -> dict:
        return {
            "pH": self.pH,
            "pka_table": self.pka_table,
            "pka_source": self.pka_source,
            "sites": [
                {"label": lab, "resname": rn, "charge_e": q, "pka": p, "state": st}
                for lab, rn, q, p, st in zip(
                    self.label.tolist(),
                    self.resname.tolist(),
                    self.charge_e.tolist(),
                    self.pka.tolist(),
                    self.state.tolist(),
                    strict=True,
                )
            ],
        }


def _override_for(overrides: Mapping[str, float], chain: str, resname: str, resid: int):
    for key in (f"{chain}:{resname}{resid}".upper(), f"{resname}{resid}".upper(), resname.upper()):
        if key in overrides:
            return overrides[key]
    return None


def titratable_sites(
    atoms: Atoms,
    *,
    pH: float = DEFAULT_PH,
    pka_table: str = DEFAULT_PKA_TABLE,
    charge_states: Mapping[str, float] | None = None,
) -> TitratableSites:
    """Locate the titratable side chains of a model and give their charge at ``pH``.

    Parameters
    ----------
    atoms : Atoms
    pH : float
        Between 0 and 14 (default 7.0).
    pka_table : {"grimsley2009", "thurlkill2006"}
    charge_states : mapping of str to float, optional
        Fixed charges (e) by residue type, type+number or chain:type+number, as from
        :func:`parse_charge_states`; they win over the pKa table.

    Returns
    -------
    TitratableSites
        One site per titratable residue whose charge-carrying atoms are present.
    """
    if not isinstance(atoms, Atoms):
        raise InputError(f"atoms must be an Atoms table, got {type(atoms).__name__}")
    pH = check_range(pH, "pH", 0.0, 14.0)
    table_name = check_choice(pka_table, "pka_table", PKA_TABLES)
    table = PKA_TABLES[table_name]
    overrides = {str(k).upper(): float(v) for k, v in (charge_states or {}).items()}
    # candidates by atom name first (cheap on large models), then the residue types
    site_names = sorted({n for _, names in TITRATABLE_GROUPS.values() for n in names})
    idx = np.flatnonzero(np.isin(atoms.name, site_names))
    idx = idx[atoms.kind[idx] == "polymer"]
    # residue types and atom names as small integer codes, so that the checks run on
    # the few distinct names rather than on every atom
    res_names, res_code = np.unique(atoms.resname[idx], return_inverse=True)
    raw_of = [str(r).strip().upper() for r in res_names.tolist()]
    std_of = [standard_name(r) or r for r in raw_of]
    atom_names, name_code = np.unique(atoms.name[idx], return_inverse=True)
    allowed = np.array(
        [[(std, str(n)) in _SITE_ATOMS for n in atom_names.tolist()] for std in std_of],
        dtype=bool,
    ).reshape(len(std_of), len(atom_names))
    keep = allowed[res_code, name_code] if len(idx) else np.zeros(0, dtype=bool)
    idx, res_code = idx[keep], res_code[keep]
    # one integer key per residue (chain, number, insertion code)
    _, chain_code = np.unique(atoms.chain[idx], return_inverse=True)
    _, icode_code = np.unique(atoms.icode[idx], return_inverse=True)
    resid = atoms.resid[idx].astype(np.int64)
    keys = (chain_code.astype(np.int64) * (1 << 40)) + ((resid - resid.min(initial=0)) << 8)
    keys += icode_code
    uniq, first, inverse = np.unique(keys, return_index=True, return_inverse=True)
    count = np.bincount(inverse, minlength=len(uniq)).astype(float)
    pos = (
        np.stack(
            [np.bincount(inverse, atoms.coords_A[idx, k], len(uniq)) for k in range(3)], axis=1
        )
        / np.maximum(count, 1)[:, None]
    )
    i0 = idx[first]
    labels = atoms.subset(i0).residue_labels().astype(str)
    # per residue type: name, sign, pKa and any charge its name fixes (NaN: none)
    type_sign = np.array([TITRATABLE_GROUPS.get(s, (1,))[0] for s in std_of])
    type_pka = np.array([table.get(s, np.nan) for s in std_of], dtype=float)
    type_fixed = np.array([FIXED_STATE_NAMES.get(r, np.nan) for r in raw_of], dtype=float)
    site_type = res_code[first]
    std_names = np.array(std_of, dtype=object)[site_type].astype(str) if len(first) else first
    sign = type_sign[site_type].astype(float)
    pka = type_pka[site_type]
    charge = hh_charge_e(sign, pka, pH) if len(sign) else np.empty(0)
    state = np.full(len(uniq), "pH", dtype=object)
    # disulfides: SG within 2.5 Å of another SG
    cys = np.flatnonzero(std_names == "CYS")
    if cys.size > 1:
        pairs = cKDTree(pos[cys]).query_pairs(DISULFIDE_DISTANCE_A, output_type="ndarray")
        bonded = cys[np.unique(pairs)] if len(pairs) else np.empty(0, dtype=int)
        charge[bonded] = 0.0
        state[bonded] = "disulfide"
    fixed_charge = type_fixed[site_type]
    fixed = np.flatnonzero(np.isfinite(fixed_charge) & (state == "pH"))
    charge[fixed] = fixed_charge[fixed]
    state[fixed] = "residue name"
    if overrides:
        for k in range(len(uniq)):
            value = _override_for(
                overrides, str(atoms.chain[i0[k]]), str(std_names[k]), int(atoms.resid[i0[k]])
            )
            if value is not None:
                charge[k] = value
                state[k] = "override"
    pka = np.where(state == "pH", pka, np.nan)
    order = np.argsort(i0, kind="stable")
    return TitratableSites(
        position_A=pos[order],
        charge_e=charge[order].astype(float),
        label=labels[order],
        resname=std_names[order].astype(str),
        pka=pka[order].astype(float),
        state=state[order].astype(str),
        pH=pH,
        pka_table=table_name,
        pka_source=PKA_SOURCES[table_name],
    )
