"""What was run on what: warnings and provenance recorded in every JSON and CSV.

A :class:`RunRecord` belongs to one command-line run. It collects the warning lines
the run shows on stderr (kept even with ``--quiet``, which only hides them) and
knows the run's provenance: the command line, every option value, the SHA-256 of
each input file, the versions of poreprobe and of the libraries that shape the
numbers, and the UTC start time. :meth:`RunRecord.annotate` adds both to a JSON
document (keys ``warnings`` and ``provenance``) or as ``#`` comment lines at the top
of a CSV file.
"""

from __future__ import annotations

import datetime
import hashlib
import json
import logging
import math
import os
import sys
from collections.abc import Iterable, Mapping, Sequence

from poreprobe._version import __version__

#: Libraries whose versions are recorded (read from package metadata, not imported).
LIBRARIES = ("numpy", "scipy", "gemmi", "MDAnalysis")


def library_versions(names: Sequence[str] = LIBRARIES) -> dict[str, str | None]:
    """Installed version of each library (None when it is not installed)."""
    from importlib import metadata

    out: dict[str, str | None] = {}
    for name in names:
        try:
            out[name] = metadata.version(name)
        except metadata.PackageNotFoundError:
            out[name] = None
    return out


def sha256_of(path, *, chunk_bytes: int = 1 << 20) -> str:
    """SHA-256 (hex) of a file's bytes, read in chunks."""
    digest = hashlib.sha256()
    with open(os.fspath(path), "rb") as fh:
        while block := fh.read(chunk_bytes):
            digest.update(block)
    return digest.hexdigest()


def json_safe(value):
    """A JSON-ready copy of an option value (paths as text, non-finite floats as None)."""
    if value is None or isinstance(value, bool | int | str):
        return value if not isinstance(value, str) else str(value)
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, Mapping):
        return {str(k): json_safe(v) for k, v in value.items()}
    if isinstance(value, list | tuple | set | frozenset):
        return [json_safe(v) for v in value]
    if isinstance(value, os.PathLike):
        return os.fspath(value)
    return str(value)


class RunRecord:
    """Warnings and provenance of one command-line run.

    Parameters
    ----------
    argv : sequence of str
        The command line after the program name.
    options : mapping
        Every option value (the parsed arguments; callables are left out).
    inputs : iterable of path
        Input files; each existing one gets its SHA-256 in the provenance.
    quiet : bool
        Do not print warnings (they are still recorded).
    stream : file, optional
        Where warnings are printed (default ``sys.stderr``).
    """

    def __init__(
        self,
        argv: Sequence[str],
        options: Mapping,
        inputs: Iterable = (),
        *,
        quiet: bool = False,
        stream=None,
    ):
        self.argv = [str(a) for a in argv]
        self.options = {str(k): json_safe(v) for k, v in dict(options).items() if not callable(v)}
        self.inputs = list(dict.fromkeys(os.fspath(p) for p in inputs))
        self.quiet = quiet
        self.stream = stream
        self.warnings: list[str] = []
        self.started_utc = (
            datetime.datetime.now(datetime.UTC).isoformat(timespec="seconds").replace("+00:00", "Z")
        )
        self._provenance: dict | None = None

    # ------------------------------------------------------------------ warnings
    def warn(self, text: str) -> None:
        """Record one warning line and print it (``poreprobe: warning: ...``) unless quiet."""
        text = " ".join(str(text).split())
        if text in self.warnings:
            return
        self.warnings.append(text)
        if not self.quiet:
            (self.stream or sys.stderr).write(f"poreprobe: warning: {text}\n")

    def show_warning(self, message, category, filename, lineno, file=None, line=None) -> None:
        """Drop-in for ``warnings.showwarning``: every Python warning goes through :meth:`warn`."""
        self.warn(str(message))

    def log_handler(self) -> logging.Handler:
        """A logging handler that passes WARNING and above through :meth:`warn`."""
        return _RecordHandler(self)

    # ------------------------------------------------------------------ provenance
    def provenance(self) -> dict:
        """The provenance block (input hashes computed once, on first use)."""
        if self._provenance is None:
            hashes = {}
            for path in self.inputs:
                if os.path.isfile(path):
                    try:
                        hashes[path] = sha256_of(path)
                    except OSError:
                        hashes[path] = None
            self._provenance = {
                "command_line": ["poreprobe", *self.argv],
                "options": self.options,
                "input_sha256": hashes,
                "tool": "poreprobe",
                "tool_version": __version__,
                "library_versions": library_versions(),
                "python_version": sys.version.split()[0],
                "utc_time": self.started_utc,
            }
        return self._provenance

    def comment_lines(self) -> list[str]:
        """The provenance and warnings as ``#`` comment lines for a CSV file."""
        prov = self.provenance()
        libs = ", ".join(f"{k} {v}" for k, v in prov["library_versions"].items())
        lines = [
            f"# provenance: {' '.join(prov['command_line'])}",
            f"# provenance: poreprobe {prov['tool_version']}; {libs}; "
            f"Python {prov['python_version']}; UTC {prov['utc_time']}",
        ]
        lines += [f"# provenance: input {p} sha256 {h}" for p, h in prov["input_sha256"].items()]
        lines.append(f"# provenance: options {json.dumps(prov['options'], sort_keys=True)}")
        lines += [f"# warning: {w}" for w in self.warnings]
        return lines

    def annotate(self, kind: str, data, payload=None):
        """Add warnings and provenance to a staged output (JSON document or CSV text)."""
        if kind == "json" and isinstance(payload, dict):
            doc = dict(payload)
            previous = doc.get("warnings")
            own = list(previous) if isinstance(previous, list) else []
            doc["warnings"] = list(dict.fromkeys([*map(str, own), *self.warnings]))
            doc["provenance"] = self.provenance()
            return json.dumps(doc, indent=2, allow_nan=False) + "\n"
        if kind == "csv" and isinstance(data, str):
            return "\n".join(self.comment_lines()) + "\n" + data
        return data


class _RecordHandler(logging.Handler):
    """Logged warnings (poreprobe's and the libraries') as warning lines of a RunRecord."""

    def __init__(self, record: RunRecord):
        super().__init__(logging.WARNING)
        self.record = record

    def emit(self, log_record: logging.LogRecord) -> None:
        try:
            self.record.warn(log_record.getMessage())
        except Exception:  # noqa: BLE001 - logging must never break the run
            self.handleError(log_record)
