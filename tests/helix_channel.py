"""The invented test tetramer: four ideal helices of real residues (see poreprobe.demo.helices)."""

from __future__ import annotations

from poreprobe.demo.helices import SEQUENCE, helix_bundle

__all__ = ["SEQUENCE", "build_channel"]


def build_channel(*, offset_A: float = 9.5, hydrogens: bool = False):
    """The test tetramer (chains A-D): SER 1, THR 5, LEU 12, PHE 19, ALA 23 face the pore."""
    return helix_bundle(
        SEQUENCE, offset_A=offset_A, hydrogens=hydrogens, source="invented helix tetramer"
    )
