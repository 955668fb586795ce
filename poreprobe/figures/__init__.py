"""Figures (matplotlib, imported only in this package) and 3-D exports for molecular viewers.

``style`` holds the house style and file writing, ``data`` reads the arrays from
results or their JSON, ``references`` the ion reference bands; one module per figure
kind (``profile_plot``, ``overlay_plot``, ``probes_plot``, ``capture_plot``,
``resistance_plot``, ``kymograph_plot``); ``draw`` picks a kind for ``poreprobe plot``.
"""
