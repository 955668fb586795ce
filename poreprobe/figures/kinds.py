"""Names of the figure kinds and file formats (no matplotlib here: the command line lists them)."""

#: Every figure ``poreprobe plot KIND`` draws.
FIGURE_KINDS = ("profile", "overlay", "probes", "capture", "resistance", "kymograph")
#: Figure file formats by suffix.
FIGURE_SUFFIXES = {".png": "png", ".svg": "svg", ".pdf": "pdf"}
