"""The package version, in one place (read by pyproject.toml and every module that records it)."""

__version__ = "0.1.0"
