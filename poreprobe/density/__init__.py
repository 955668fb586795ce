"""A model against its own density map at the pore: unmodelled density in the lumen,
side-chain support of the lining residues and the pore radius measured in the map.
Sits above ``poreprobe.geometry``; imports from it, ``poreprobe.checks.model_checks``
(the Finding record) and ``poreprobe.io``.
"""
