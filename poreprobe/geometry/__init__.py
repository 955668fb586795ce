"""Pore geometry from atoms: clearance kernel, axis and symmetry, superposition,
largest sphere per plane, radius profile, reach field, probe scan, segments, lining,
clashes, and the invented analytic test geometries. Imports only ``poreprobe.io``.
"""
