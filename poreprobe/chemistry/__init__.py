"""Pore chemistry along the axis: rings of equivalent lining residues, their charge at a
pH (Henderson-Hasselbalch), hydropathy on published scales, a screened Coulomb potential
on the centre line and flags for likely dewetted (hydrophobic) stretches. Sits above
``poreprobe.geometry`` and ``poreprobe.bench``; imports only from them and ``poreprobe.io``.
"""
