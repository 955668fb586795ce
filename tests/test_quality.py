"""Readiness report: deliberately damaged copies of the invented helix tetramer.

Each damage is planted in one place; the report must name exactly that place, and the
undamaged model must show none of the planted findings.
"""

from dataclasses import replace

import numpy as np
import pytest
from helix_channel import build_channel

from poreprobe import read_structure
from poreprobe.bench.ions import get_ion
from poreprobe.checks.quality import check_model, classify
from poreprobe.errors import InputError, QualityWarning
from poreprobe.geometry.superpose import rotate_about
from poreprobe.io.radii import RADIUS_SETS
from poreprobe.io.structure import make_atoms
from poreprobe.io.structure_writer import write_structure

PLANTED_CODES = {
    "missing-side-chain-atoms",
    "missing-backbone-atoms",
    "alternate-locations",
    "chain-break",
    "asymmetry",
    "steric-clash",
    "water-in-pore",
    "zero-occupancy",
    "partial-occupancy",
    "high-b-factor",
    "nonstandard-residue",
    "hetero-in-pore",
    "ion-in-pore",
}


def _mask(atoms, chain, resid, names=None):
    m = (atoms.chain == chain) & (atoms.resid == resid)
    if names is not None:
        m &= np.isin(atoms.name, names)
    return m


def _roundtrip(atoms, tmp_path, name):
    """Write a PDB file and read it back as a user would (everything kept)."""
    path = tmp_path / f"{name}.pdb"
    write_structure(atoms, path)
    return read_structure(path, waters=True, ions=True, hetero=True)


def _residues(report, code):
    return {lab for f in report.by_code(code) for lab in f.residues}


@pytest.fixture(scope="module")
def clean():
    return build_channel()


@pytest.fixture(scope="module")
def clean_report(clean, tmp_path_factory):
    return check_model(_roundtrip(clean, tmp_path_factory.mktemp("clean"), "clean"))


def test_undamaged_model_has_no_planted_findings(clean_report):
    codes = {f.code for f in clean_report.findings}
    assert codes == {"hydrogens-absent"}
    assert not codes & PLANTED_CODES
    assert clean_report.symmetry is not None
    assert np.nanmax(clean_report.symmetry.deviation_A) < 0.01  # PDB rounding only


def test_lining_and_constrictions_of_the_undamaged_model(clean_report):
    lining = clean_report.lining
    narrowest = min(lining.constrictions, key=lambda c: c.radius_A)
    assert [g.text for g in narrowest.groups] == ["ring of 4 x LEU 12 side chains"]
    assert narrowest.radius_A == pytest.approx(clean_report.profile.min_radius_A, abs=1e-12)
    leu = [r for r in lining.residues if r.resname == "LEU" and r.resid == 12]
    assert {r.chain for r in leu} == {"A", "B", "C", "D"}
    for r in leu:
        assert r.closest_A == pytest.approx(narrowest.radius_A, abs=0.02)
        assert r.part == "side chain"
        assert r.s_min_A <= narrowest.s_A <= r.s_max_A


def test_truncated_side_chain(clean, tmp_path):
    damaged = clean.subset(~_mask(clean, "A", 12, ["CG", "CD1", "CD2"]))
    report = check_model(_roundtrip(damaged, tmp_path, "truncated"), warn=False)
    found = report.by_code("missing-side-chain-atoms")
    assert [f.residues for f in found] == [("A:LEU12",)]
    assert found[0].details["missing"] == ["CG", "CD1", "CD2"]
    assert found[0].severity in ("high", "medium")
    # the truncation makes the pore look wider there (the point of the warning)
    assert report.profile.min_radius_A > 2.77 - 0.01 or report.lining.constrictions


def test_alternate_location(clean, tmp_path):
    side = _mask(clean, "B", 19, ["CB", "CG1", "CG2"])
    ca = clean.coords_A[_mask(clean, "B", 19, ["CA"])][0]
    cb = clean.coords_A[_mask(clean, "B", 19, ["CB"])][0]
    alt_coords = rotate_about(clean.coords_A[side], cb, cb - ca, np.radians(120))
    rows, alt, occ, coords = [], [], [], []
    for i in range(len(clean)):
        if side[i]:
            k = int(np.flatnonzero(np.flatnonzero(side) == i)[0])
            rows += [i, i]
            alt += ["A", "B"]
            occ += [0.6, 0.4]
            coords += [clean.coords_A[i], alt_coords[k]]
        else:
            rows.append(i)
            alt.append("")
            occ.append(1.0)
            coords.append(clean.coords_A[i])
    rows = np.array(rows)
    damaged = make_atoms(
        np.array(coords),
        element=clean.element[rows],
        name=clean.name[rows],
        resname=clean.resname[rows],
        resid=clean.resid[rows],
        chain=clean.chain[rows],
        altloc=alt,
        occupancy=occ,
        b_factor=clean.b_factor[rows],
    )
    report = check_model(_roundtrip(damaged, tmp_path, "altloc"), warn=False)
    found = report.by_code("alternate-locations")
    assert [f.residues for f in found] == [("B:VAL19",)]
    assert found[0].details["kept_altlocs"] == ["A"]
    assert not report.by_code("partial-occupancy")  # partial occupancy of altlocs is normal


def test_chain_break(clean, tmp_path):
    damaged = clean.subset(~_mask(clean, "C", 13))
    report = check_model(_roundtrip(damaged, tmp_path, "break"), warn=False)
    found = report.by_code("chain-break")
    assert [f.residues for f in found] == [("C:LEU12", "C:ARG14")]
    assert found[0].details["missing_by_numbering"] == 1
    assert found[0].severity == "high"  # LEU 12 lines the pore
    # the gap neither hides chain C from the symmetry analysis nor fakes an asymmetry
    assert report.profile.axis.method == "symmetry C4"
    assert not report.by_code("asymmetry")


def test_moved_subunit(clean, tmp_path):
    chain_d = clean.chain == "D"
    centroid = clean.coords_A[chain_d].mean(0)
    outward = np.array([centroid[0], centroid[1], 0.0]) / np.hypot(*centroid[:2])
    coords = clean.coords_A.copy()
    coords[chain_d] += 1.5 * outward
    report = check_model(_roundtrip(clean.with_coords(coords), tmp_path, "moved"), warn=False)
    found = report.by_code("asymmetry")
    assert [f.residues[0].split(":")[0] for f in found] == ["D"]
    assert "D:LEU12" in found[0].residues
    deviations = found[0].details["deviation_A"]
    # a rigid 1.5 Å shift shows as 1.5 Å at every residue (PDB rounding: 0.001 Å)
    np.testing.assert_allclose(list(deviations.values()), 1.5, atol=0.005)
    other = report.symmetry.deviation_A[[report.symmetry.chains.index(c) for c in "ABC"]]
    assert np.nanmax(other) < 0.005


def test_steric_clash(clean, tmp_path):
    mover = np.flatnonzero(_mask(clean, "A", 12, ["CD1"]))[0]
    target = np.flatnonzero(_mask(clean, "B", 12, ["CD1"]))[0]
    coords = clean.coords_A.copy()
    direction = coords[mover] - coords[target]
    coords[mover] = coords[target] + 2.2 * direction / np.linalg.norm(direction)
    report = check_model(_roundtrip(clean.with_coords(coords), tmp_path, "clash"), warn=False)
    found = report.by_code("steric-clash")
    assert {f.residues for f in found} == {("A:LEU12", "B:LEU12")}
    planted = [f for f in found if set(f.details["atoms"]) == {"A:LEU12:CD1", "B:LEU12:CD1"}]
    assert len(planted) == 1
    assert planted[0].details["distance_A"] == pytest.approx(2.2, abs=0.002)
    assert planted[0].details["radius_sum_A"] == pytest.approx(3.4)  # Bondi 1964 C: 1.70 Å


def test_water_in_pore(clean, tmp_path):
    waters = make_atoms(
        [[0.0, 0.0, 5.0], [30.0, 0.0, 0.0]],
        element=["O", "O"],
        name=["O", "O"],
        resname=["HOH", "HOH"],
        resid=[101, 102],
        chain=["W", "W"],
        kind=["water", "water"],
    )
    damaged = make_atoms(
        np.vstack([clean.coords_A, waters.coords_A]),
        **{
            f: np.concatenate([getattr(clean, f), getattr(waters, f)])
            for f in ("element", "name", "resname", "resid", "chain", "b_factor", "kind")
        },
    )
    atoms = _roundtrip(damaged, tmp_path, "water")
    assert (atoms.kind == "water").sum() == 2
    report = check_model(atoms, warn=False)
    found = report.by_code("water-in-pore")
    assert [f.residues for f in found] == [("W:HOH101",)]
    assert found[0].details["counted_as_walls"] is False
    # counting waters as walls narrows the pore where the water sits
    walled = check_model(atoms, walls=("polymer", "water"), warn=False)
    assert walled.by_code("water-in-pore")[0].details["counted_as_walls"] is True
    k = int(np.argmin(np.abs(report.profile.s_A - walled.profile.axis.s_A([0, 0, 5.0]))))
    assert walled.profile.radius_A[k] < report.profile.radius_A[k] - 1.0


def test_occupancy_b_factor_and_nonstandard(clean, tmp_path):
    occ = clean.occupancy.copy()
    occ[_mask(clean, "D", 1, ["OG"])] = 0.0
    occ[_mask(clean, "A", 5, ["OG1"])] = 0.5
    b = clean.b_factor.copy()
    b[_mask(clean, "C", 5)] = 200.0
    resname = clean.resname.copy()
    resname[_mask(clean, "B", 8)] = "AIB"  # a non-standard amino acid
    damaged = replace(clean, occupancy=occ, b_factor=b, resname=resname)
    report = check_model(_roundtrip(damaged, tmp_path, "misc"), warn=False)
    assert _residues(report, "zero-occupancy") == {"D:SER1"}
    assert _residues(report, "partial-occupancy") == {"A:THR5"}
    assert _residues(report, "high-b-factor") == {"C:THR5"}
    assert _residues(report, "nonstandard-residue") == {"B:AIB8"}
    assert report.by_code("zero-occupancy")[0].severity == "high"  # SER 1 lines the pore


def test_findings_sorted_by_severity_and_warning(clean, tmp_path):
    damaged = clean.subset(~_mask(clean, "A", 12, ["CG", "CD1", "CD2"]))
    damaged = damaged.subset(~_mask(damaged, "C", 13))
    with pytest.warns(QualityWarning, match="high-severity"):
        report = check_model(damaged)
    order = ["high", "medium", "low", "info"]
    ranks = [order.index(f.severity) for f in report.findings]
    assert ranks == sorted(ranks)
    assert report.findings[0].severity == "high"


def test_permeation_verdict_thresholds():
    # Shannon 1976 (Acta Cryst. A32:751) crystal radius of K+, CN 6: 1.38 Å;
    # Nightingale 1959 (J. Phys. Chem. 63:1381) hydrated radius of K+: 3.31 Å.
    k = get_ion("K")
    assert (k.crystal_radius_A, k.hydrated_radius_A) == (1.38, 3.31)
    assert classify(3.31, k) == "hydrated"
    assert classify(3.30, k) == "dehydrated"
    assert classify(1.38, k) == "dehydrated"
    assert classify(1.37, k) == "closed"


def test_verdict_and_sensitivity(clean_report):
    verdict = clean_report.verdict
    assert verdict.ion == "K+"
    assert verdict.verdict == classify(clean_report.profile.min_radius_A, get_ion("K"))
    assert verdict.verdict == "dehydrated"  # 1.38 <= 2.77 < 3.31 Å
    rows = clean_report.sensitivity
    assert {(r.radius_set, r.hydrogens) for r in rows} == {
        (n, h) for n in RADIUS_SETS for h in ("in", "out")
    }
    main = [r for r in rows if r.note == "main profile"]
    assert len(main) == 1 and main[0].min_radius_A == clean_report.profile.min_radius_A
    assert all(r.min_radius_A is None for r in rows if r.hydrogens == "in")  # no H in model


def test_sensitivity_with_hydrogens():
    atoms = build_channel(hydrogens=True)
    report = check_model(atoms, warn=False)
    rows = {(r.radius_set, r.hydrogens): r.min_radius_A for r in report.sensitivity}
    # explicit hydrogens narrow the pore; without them the model matches the heavy-atom build
    assert rows[("bondi", "in")] < rows[("bondi", "out")]
    heavy = check_model(build_channel(), warn=False)
    # (same heavy atoms; the axis point moves with the hydrogens, so planes shift slightly)
    assert rows[("bondi", "out")] == pytest.approx(heavy.profile.min_radius_A, abs=0.01)
    assert {f.code for f in report.findings} == {"hydrogens-present"}


def test_ion_verdict_closed_and_hydrated():
    narrow = check_model(build_channel(offset_A=8.0), warn=False)
    wide = check_model(build_channel(offset_A=12.0), ion="Na", warn=False)
    assert narrow.profile.min_radius_A < 1.38 and narrow.verdict.verdict == "closed"
    assert wide.profile.min_radius_A >= 3.58 and wide.verdict.verdict == "hydrated"


def test_bad_input(clean):
    with pytest.raises(InputError, match="unknown ion"):
        check_model(clean, ion="Xx")
    with pytest.raises(InputError, match="walls"):
        check_model(clean, walls=("water",))
    with pytest.raises(InputError, match="clash_fraction"):
        check_model(clean, clash_fraction=2.0)
    with pytest.raises(InputError, match="no polymer"):
        check_model(replace(clean, kind=np.full(len(clean), "hetero")))


def test_published_gramicidin_model(gramicidin_pdb):
    """A real deposited channel (gramicidin A dimer from MDAnalysisTests' data folder)."""
    atoms = read_structure(gramicidin_pdb, waters=True, ions=True, hetero=True)
    report = check_model(atoms, warn=False)
    # gramicidin A is a single-file pore about 4 Å across (Finkelstein & Andersen 1981,
    # J. Membr. Biol. 59:155): no room for a hydrated K+ (3.31 Å, Nightingale 1959)
    assert 1.0 < report.profile.min_radius_A < 2.0
    assert report.verdict.verdict != "hydrated"
    # K+ conducts through gramicidin, yet the static heavy-atom profile comes within a few
    # hundredths of an Å of its crystal radius (1.38 Å, Shannon 1976): flagged as borderline
    assert report.verdict.borderline
    # formyl and ethanolamine caps are not reported as non-standard residues
    assert not report.by_code("nonstandard-residue")
    assert {f.code for f in report.findings} == {"hydrogens-absent", "uniform-b-factors"}


def test_rigid_motion_leaves_the_report_unchanged(clean, clean_report):
    from poreprobe.geometry.superpose import rotation_matrix

    rot = rotation_matrix(np.array([0.3, -1.0, 0.4]) / np.linalg.norm([0.3, -1.0, 0.4]), 2.1)
    moved = clean.with_coords(clean.coords_A @ rot.T + [40.0, -3.0, 11.0])
    report = check_model(moved, warn=False)
    assert [f.code for f in report.findings] == [f.code for f in clean_report.findings]
    assert report.profile.min_radius_A == pytest.approx(
        clean_report.profile.min_radius_A, abs=0.01
    )  # PDB rounding in one
    assert [r.label for r in report.lining.residues] == [
        r.label for r in clean_report.lining.residues
    ]
    assert [g.text for c in report.lining.constrictions for g in c.groups] == [
        g.text for c in clean_report.lining.constrictions for g in c.groups
    ]
