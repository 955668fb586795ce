"""``poreprobe mapcheck`` and ``poreprobe check --density-map`` on maps computed from the demo.

Maps are computed from the invented demo channel with gemmi's electron-scattering density
calculator (International Tables Vol. C, Table 4.3.2.2 scattering factors) by
:func:`poreprobe.density.model_map.simulate_map`, written as MRC files by our own writer.
"""

import json

import gemmi
import numpy as np
import pytest

import poreprobe as pp
from poreprobe.cli.main import main
from poreprobe.demo.run import demo_path
from poreprobe.density.model_map import simulate_map
from poreprobe.io.density_map import DensityMap, write_density_map
from poreprobe.io.structure import concatenate_atoms

D_A = 3.0


@pytest.fixture(scope="module")
def pdb():
    return str(demo_path("demo_channel", "pdb"))


@pytest.fixture(scope="module")
def maps(pdb, tmp_path_factory):
    """A clean map, one with a K+ on the axis, and bad maps, as files."""
    folder = tmp_path_factory.mktemp("maps")
    atoms = pp.read_structure(pdb)
    axis = pp.find_pore_axis(atoms)
    ion = pp.Atoms(
        coords_A=axis.from_frame([[0.0, 0.0, -2.0]]),
        element=np.array(["K"]),
        name=np.array(["K"]),
        resname=np.array(["K"]),
        resid=np.array([1]),
        icode=np.array([""]),
        chain=np.array(["X"]),
        altloc=np.array([""]),
        occupancy=np.ones(1),
        b_factor=np.zeros(1),
        kind=np.array(["ion"]),
    )
    box = (atoms.coords_A.min(axis=0) - 8.0, atoms.coords_A.max(axis=0) + 8.0)
    clean = simulate_map(atoms, D_A, noise_rms=0.2, box_A=box)
    planted = simulate_map(concatenate_atoms([atoms, ion]), D_A, noise_rms=0.2, box_A=box)
    paths = {"clean": folder / "clean.mrc", "ion": folder / "ion.map"}
    write_density_map(clean, paths["clean"])
    write_density_map(planted, paths["ion"])
    paths["far"] = folder / "far.mrc"
    write_density_map(
        DensityMap(**{**clean.__dict__, "origin_A": clean.origin_A + 300}), paths["far"]
    )
    paths["cell"] = folder / "cell.mrc"
    write_density_map(
        DensityMap(**{**clean.__dict__, "voxel_A": clean.voxel_A * 1.15}), paths["cell"]
    )
    paths["corrupt"] = folder / "corrupt.mrc"
    paths["corrupt"].write_bytes(paths["clean"].read_bytes()[:600])
    paths["nan"] = folder / "nan.mrc"
    values = np.array(clean.values)
    values[3, 3, 3] = np.nan
    grid = gemmi.FloatGrid(np.asfortranarray(values))
    grid.set_unit_cell(gemmi.UnitCell(*(np.array(values.shape) * 1.0).tolist(), 90, 90, 90))
    ccp4 = gemmi.Ccp4Map()
    ccp4.grid = grid
    ccp4.update_ccp4_header(2, True)
    ccp4.write_ccp4_map(str(paths["nan"]))
    return paths


def test_mapcheck_writes_json_csv_and_figure(pdb, maps, tmp_path, capsys):
    out = tmp_path / "m.json"
    code = main(
        [
            "mapcheck",
            pdb,
            str(maps["ion"]),
            "--resolution-A",
            "3",
            "--json",
            str(out),
            "--csv",
            str(tmp_path / "m.csv"),
            "--figure",
            str(tmp_path / "m.png"),
        ]
    )
    assert code == 0
    text = capsys.readouterr().out
    assert "not measurements" in text and "unmodelled density in the pore: 1 blob" in text
    d = json.loads(out.read_text())
    assert d["caveat"].startswith("model-based estimates")
    assert d["contour_rule"].startswith("map mean + 3 RMS")
    assert d["settings"]["radius_set"] == "bondi"
    assert "warnings" in d and d["map"]["source"].endswith("ion.map")
    (blob,) = d["blobs"]
    assert abs(blob["s_A"] + 2.0) <= D_A / 2 and blob["on_axis"]
    by_code = {f["code"]: f for f in d["findings"]}
    assert by_code["pore-density"]["details"]["s_A"] == pytest.approx(blob["s_A"])
    # the ion fills the middle of the cavity: the map's pore is narrower there
    assert set(by_code) <= {"pore-density", "map-radius-differs"}
    if "map-radius-differs" in by_code:
        narrower = by_code["map-radius-differs"]["details"]
        assert narrower["difference_A"] < 0 and abs(narrower["s_A"] - blob["s_A"]) <= D_A
    csv = (tmp_path / "m.csv").read_text().splitlines()
    own = [ln for ln in csv if not ln.startswith(("# provenance:", "# warning:"))]
    assert csv[0].startswith("# provenance: poreprobe mapcheck")
    assert own[0].startswith("# poreprobe") and "s_A,model_radius_A,map_radius_A" in "\n".join(own)
    assert (tmp_path / "m.png").stat().st_size > 1000


def test_check_with_a_density_map_adds_findings(pdb, maps, tmp_path, capsys):
    out = tmp_path / "c.json"
    code = main(
        [
            "check",
            pdb,
            "--density-map",
            str(maps["ion"]),
            "--resolution-A",
            "3",
            "--json",
            str(out),
            "--quiet",
        ]
    )
    assert code == 0
    d = json.loads(out.read_text())
    codes = [f["code"] for f in d["findings"]]
    assert "pore-density" in codes
    assert d["density_map"]["blobs"] and d["density_map"]["resolution_A"] == 3.0


def test_clean_map_has_no_map_findings(pdb, maps, tmp_path):
    out = tmp_path / "c.json"
    assert (
        main(
            [
                "mapcheck",
                pdb,
                str(maps["clean"]),
                "--resolution-A",
                "3",
                "--json",
                str(out),
                "--quiet",
            ]
        )
        == 0
    )
    d = json.loads(out.read_text())
    assert d["blobs"] == [] and d["findings"] == []


@pytest.mark.parametrize(
    "which, message",
    [
        ("far", "does not cover the pore"),
        ("cell", "does not sit in the map's density"),
        ("corrupt", "cannot read"),
        ("nan", "non-finite values"),
    ],
)
def test_bad_maps_are_one_line_errors(pdb, maps, tmp_path, capsys, which, message):
    out = tmp_path / "x.json"
    code = main(["mapcheck", pdb, str(maps[which]), "--resolution-A", "3", "--json", str(out)])
    assert code == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("poreprobe: error: ") and message in err[0]
    assert not out.exists()


@pytest.mark.parametrize(
    "argv, message",
    [
        (["mapcheck", "{pdb}", "{map}"], "needs --resolution-A"),
        (["check", "{pdb}", "--density-map", "{map}"], "--density-map needs --resolution-A"),
        (["check", "{pdb}", "--contour", "0.2"], "--contour needs --density-map"),
        (["mapcheck", "{pdb}", "{pdb}", "--resolution-A", "3"], "must end in"),
    ],
)
def test_option_errors_are_one_line(pdb, maps, tmp_path, capsys, argv, message):
    out = tmp_path / "x.json"
    fill = {"pdb": pdb, "map": str(maps["clean"])}
    code = main([w.format(**fill) for w in argv] + ["--json", str(out)])
    assert code == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("poreprobe: error: ") and message in err[0]
    assert not out.exists()


def test_map_figure_redraws_from_saved_json(pdb, maps, tmp_path):
    from poreprobe.errors import InputError
    from poreprobe.figures.map_panel import plot_map_check

    out = tmp_path / "c.json"
    assert (
        main(
            [
                "check",
                pdb,
                "--density-map",
                str(maps["ion"]),
                "--resolution-A",
                "3",
                "--json",
                str(out),
                "--figure",
                str(tmp_path / "c.svg"),
                "--quiet",
            ]
        )
        == 0
    )
    assert "unmodelled density" in (tmp_path / "c.svg").read_text()
    fig = plot_map_check(json.loads(out.read_text()))
    assert len(fig.axes) == 2
    with pytest.raises(InputError, match="no map check"):
        plot_map_check({"profile": {"s_A": [0.0]}})
