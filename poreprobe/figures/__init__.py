"""Figures (matplotlib, imported only in this package) and 3-D exports for molecular viewers.

Figures: ``style`` holds the house style and file writing, ``data`` reads the arrays
from results or their JSON, ``references`` the ion reference bands; one module per
figure kind (``profile_plot``, ``overlay_plot``, ``probes_plot``, ``capture_plot``,
``resistance_plot``, ``kymograph_plot``, ``chemistry_panel``, ``map_panel``); ``draw``
picks a kind for ``poreprobe plot``.

Exports: ``viewer_map`` (CCP4/MRC field maps), ``viewer_mesh`` (the pore surface and
``write_mesh`` for any mesh), ``viewer_line`` (the centre line as an mmCIF table of
points), ``viewer_tube`` (the pore as a tube mesh), ``mesh_files`` (PLY, OBJ, glTF).
"""
