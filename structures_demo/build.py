"""Build the invented demo channels and write them into this folder (deterministic).

Run from anywhere: ``python structures_demo/build.py`` (needs biotite, a test dependency,
for the ideal residue templates). ``--check`` rebuilds in memory and compares with the
committed files byte for byte instead of writing. The channels are invented
(see ``poreprobe/demo_channels.py``); no part comes from a real structure.

Files: ``demo_channel``, ``demo_widened`` and ``demo_closed`` as mmCIF and PDB, and
``demo_breathing.pdb``, a 50-frame multi-model trajectory of the channel.
"""

from __future__ import annotations

import argparse
import os
import sys

HERE = os.path.dirname(os.path.abspath(__file__))


def demo_files() -> dict[str, str]:
    """File name -> text of every demo file."""
    import gemmi

    from poreprobe import demo_channels
    from poreprobe.writer import to_gemmi_structure

    out = {}
    for variant in demo_channels.MODEL_NAMES:
        atoms = demo_channels.build_model(variant)
        name = f"demo_{variant}"
        st = to_gemmi_structure(atoms, name=name.upper())
        out[f"{name}.cif"] = st.make_mmcif_document().as_string()
        out[f"{name}.pdb"] = st.make_pdb_string()
    atoms = demo_channels.build_model("channel")
    frames = demo_channels.breathing_coordinates(atoms)
    st = to_gemmi_structure(atoms, name="DEMO_BREATHING")
    template = st[0].clone()
    del st[0]
    for k, xyz in enumerate(frames):
        model = template.clone()
        model.num = k + 1
        for atom, pos in zip((cra.atom for cra in model.all()), xyz, strict=True):
            atom.pos = gemmi.Position(*map(float, xyz_round(pos)))
        st.add_model(model)
    out["demo_breathing.pdb"] = st.make_pdb_string()
    return out


def xyz_round(pos):
    return [round(float(v), 3) for v in pos]


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument(
        "--check", action="store_true", help="compare with the committed files instead of writing"
    )
    args = parser.parse_args(argv)
    sys.path.insert(0, os.path.dirname(HERE))
    files = demo_files()
    differ = []
    for name, text in files.items():
        path = os.path.join(HERE, name)
        if args.check:
            with open(path, encoding="utf-8", newline="") as fh:
                if fh.read() != text:
                    differ.append(name)
        else:
            with open(path, "w", encoding="utf-8", newline="") as fh:
                fh.write(text)
    if differ:
        print("differ from a fresh build: " + ", ".join(differ))
        return 1
    print(("checked " if args.check else "wrote ") + ", ".join(files))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
