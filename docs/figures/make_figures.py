"""Redraw the README's figures and exports on an invented channel (deterministic).

Run from the repository root: ``python docs/figures/make_figures.py``. The channel is
our own invention (a four-chain ring stack with an inner gate, a cavity, a narrow
filter and an outer vestibule, built by :mod:`poreprobe.geometry.synthetic`), so every number in
these pictures is a model-based estimate on invented geometry, not a measurement.
Each figure is drawn by ``poreprobe plot`` from the JSON the producing command wrote.
"""

from __future__ import annotations

import os
import sys
import tempfile

import numpy as np

# this checkout's poreprobe, whichever one is installed
sys.path.insert(0, os.path.abspath(os.path.join(os.path.dirname(__file__), "..", "..")))

from poreprobe.cli.main import main  # noqa: E402
from poreprobe.geometry import synthetic  # noqa: E402
from poreprobe.io.structure_writer import write_structure  # noqa: E402

HERE = os.path.dirname(os.path.abspath(__file__))
DPI = "150"
AXIS = ["--axis-point", "0", "0", "0", "--axis-direction", "0", "0", "1"]


def ring_radii_A(z: np.ndarray, gate_A: float) -> np.ndarray:
    """Ring radius along z: inner vestibule, gate, cavity, filter, outer vestibule."""
    r = np.interp(
        z,
        [-15, -10, -8, -6, -4, 2, 4, 8, 10, 15],
        [9.5, 6.5, gate_A, gate_A, 7.0, 7.0, 3.3, 3.3, 6.0, 9.5],
    )
    return r


def build(folder: str, name: str, gate_A: float) -> str:
    z = np.arange(-15.0, 15.1, 1.0)
    atoms = synthetic.ring_stack(ring_radii_A(z, gate_A), z, atoms_per_ring=28, chains=4)
    path = os.path.join(folder, f"{name}.pdb")
    write_structure(atoms, path)
    return path


def build_breathing(folder: str, n_frames: int = 40) -> tuple[str, str]:
    """The invented channel with its gate breathing (ring radius 4.3 +- 1 Å), as PDB + DCD."""
    import warnings

    import MDAnalysis

    z = np.arange(-15.0, 15.1, 1.0)
    rng = np.random.default_rng(7)
    frames = []
    for t in range(n_frames):
        gate = 4.3 + 1.0 * np.sin(2 * np.pi * t / 25)
        atoms = synthetic.ring_stack(ring_radii_A(z, gate), z, atoms_per_ring=28, chains=4)
        frames.append(atoms.coords_A + rng.normal(scale=0.15, size=atoms.coords_A.shape))
    pdb, dcd = os.path.join(folder, "breathing.pdb"), os.path.join(folder, "breathing.dcd")
    write_structure(atoms.with_coords(frames[0]), pdb)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        universe = MDAnalysis.Universe(pdb)
        with MDAnalysis.Writer(dcd, n_atoms=len(atoms), dt=50.0) as out:  # 50 ps per frame
            for coords in frames:
                universe.atoms.positions = coords
                out.write(universe.atoms)
    return pdb, dcd


def run(argv: list[str]) -> None:
    code = main(argv + ["--quiet"])
    if code:
        sys.exit(f"poreprobe {' '.join(argv)} failed with exit code {code}")


def figure(kind: str, inputs: list[str], *extra: str) -> None:
    run(
        ["plot", kind, *inputs, "--figure", os.path.join(HERE, f"{kind}.png"), "--dpi", DPI, *extra]
    )


def main_script() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        channel = build(tmp, "invented_channel", gate_A=4.3)
        widened = build(tmp, "widened_gate", gate_A=5.6)
        js = {
            k: os.path.join(tmp, f"{k}.json")
            for k in ("channel", "widened", "check", "resistance", "scan", "match")
        }
        run(["profile", channel, *AXIS, "--step-A", "0.25", "--json", js["channel"]])
        run(["profile", widened, *AXIS, "--step-A", "0.25", "--json", js["widened"]])
        run(["check", channel, *AXIS, "--step-A", "0.25", "--json", js["check"]])
        run(
            [
                "resistance",
                channel,
                *AXIS,
                "--segments",
                "gate:-9:-5",
                "cavity:-5:3",
                "filter:3:9",
                "--json",
                js["resistance"],
            ]
        )
        run(["scan", channel, *AXIS, "--probe-radii-A", "0.5:4:0.25", "--json", js["scan"]])
        # invented bench numbers: 6 pA at 150 mM K+ in plain water
        run(
            [
                "match",
                channel,
                *AXIS,
                "--probe-radii-A",
                "0.5:4:0.25",
                "--current-pA",
                "6",
                "--current-sd-pA",
                "0.6",
                "--conc-mM",
                "150",
                "--ion",
                "K",
                "--json",
                js["match"],
            ]
        )
        figure(
            "profile", [js["check"]], "--figure-ion", "K", "--figure-ion-radii", "crystal,hydrated"
        )
        figure(
            "overlay", [js["channel"], js["widened"]], "--labels", "invented channel,widened gate"
        )
        figure("probes", [js["scan"]])
        figure("capture", [js["scan"], js["match"]])
        figure("resistance", [js["resistance"]])
        pdb, dcd = build_breathing(tmp)
        traj = os.path.join(tmp, "traj.json")
        run(["traj", pdb, "--trajectory", dcd, *AXIS, "--step-A", "0.25", "--json", traj])
        figure("kymograph", [traj])
        mesh = os.path.join(tmp, "pore.ply")
        run(
            [
                "export",
                channel,
                *AXIS,
                "--mesh",
                mesh,
                "--probe-radius-A",
                "1.0",
                "--radius-range-A",
                "1.5",
                "8",
            ]
        )
        render_mesh(mesh, os.path.join(HERE, "export_mesh.png"))


def read_ply(path: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Vertices, RGB colours (0-1) and faces of an ASCII PLY written by poreprobe export."""
    with open(path, encoding="utf-8") as fh:
        lines = fh.read().splitlines()
    end = lines.index("end_header")
    n_v = int(next(ln for ln in lines if ln.startswith("element vertex")).split()[-1])
    n_f = int(next(ln for ln in lines if ln.startswith("element face")).split()[-1])
    v = np.loadtxt(lines[end + 1 : end + 1 + n_v])
    f = np.loadtxt(lines[end + 1 + n_v : end + 1 + n_v + n_f], dtype=int)[:, 1:]
    return v[:, :3], v[:, 6:9] / 255.0, f


def render_mesh(ply: str, png: str) -> None:
    """A cut-away view (front half removed) of the coloured pore surface."""
    from matplotlib.figure import Figure
    from mpl_toolkits.mplot3d.art3d import Poly3DCollection

    from poreprobe.figures.style import FONT_PT

    xyz, rgb, faces = read_ply(ply)
    back = xyz[faces].mean(axis=1)[:, 1] > 0
    fig = Figure(figsize=(50 / 25.4, 62 / 25.4), layout="constrained")
    ax = fig.add_subplot(projection="3d")
    from matplotlib.colors import LightSource

    colours = rgb[faces[back]].mean(1)
    ax.add_collection3d(
        Poly3DCollection(
            xyz[faces[back]],
            facecolors=colours,
            edgecolors=colours,
            linewidths=0.3,
            shade=True,
            lightsource=LightSource(azdeg=60, altdeg=30),
        )
    )
    half = np.ptp(xyz, axis=0).max() / 2
    mid = (xyz.max(0) + xyz.min(0)) / 2
    for k, setter in enumerate((ax.set_xlim, ax.set_ylim, ax.set_zlim)):
        setter(mid[k] - half, mid[k] + half)
    ax.view_init(elev=8, azim=-90)
    ax.set_box_aspect(None, zoom=1.9)
    ax.set_axis_off()
    ax.set_title("pore surface, probe 1.0 Å\n(front half cut away)", fontsize=FONT_PT)
    fig.savefig(png, dpi=int(DPI))


if __name__ == "__main__":
    main_script()
