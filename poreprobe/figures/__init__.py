"""Figures (matplotlib, imported only here) and 3-D exports for molecular viewers."""
