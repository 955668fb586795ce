"""Exceptions and warnings raised by poreprobe.

Every error a user can cause derives from :class:`PoreprobeError`, so the command
line can turn it into one clear line and exit code 2.
"""

from __future__ import annotations


class PoreprobeError(Exception):
    """Base class of every error poreprobe raises on purpose."""


class InputError(PoreprobeError, ValueError):
    """An argument, option or input file is not usable."""


class PoreNotFoundError(PoreprobeError, RuntimeError):
    """Valid input that holds no pore along the requested axis."""


class QualityWarning(UserWarning):
    """Suspect but usable input (missing hydrogens, altlocs, unknown elements, ...)."""


class AssemblyWarning(UserWarning):
    """The model used is not the file's coordinates as deposited (an assembly was built)."""
