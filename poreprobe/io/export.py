"""Writing results: JSON and CSV, atomically.

Files are written through :mod:`poreprobe.io.writer`: a temporary file in the
target folder renamed into place (devices and streams written through), all
outputs of a command together, so a failed run never leaves a partial output.
"""

from __future__ import annotations

import csv
import io
import json
import math
import os
from collections.abc import Iterable, Sequence

import numpy as np

from poreprobe.errors import InputError


def _jsonable(obj):
    if hasattr(obj, "to_dict"):
        return _jsonable(obj.to_dict())
    if isinstance(obj, dict):
        return {str(k): _jsonable(v) for k, v in obj.items()}
    if isinstance(obj, list | tuple):
        return [_jsonable(v) for v in obj]
    if isinstance(obj, np.ndarray):
        if obj.dtype.kind == "f":  # whole array at once: non-finite values become None
            out = obj.astype(object)
            out[~np.isfinite(obj)] = None
            return out.tolist()
        if obj.dtype.kind in "biu":
            return obj.tolist()
        return _jsonable(obj.tolist())
    if isinstance(obj, np.generic):
        return _jsonable(obj.item())
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    return obj


def write_atomic(path, text: str | bytes) -> None:
    """Write ``text`` to ``path`` safely: see :func:`poreprobe.io.writer.write_output`.

    Regular files go through a temporary file and a rename; devices, FIFOs and
    the standard streams are written through; inside a command's output plan the
    data waits for the plan's all-or-nothing commit.
    """
    from poreprobe.io.writer import write_output

    write_output(path, text)


def to_json(result, path=None, *, indent: int = 2) -> str:
    """Serialise a result (anything with ``to_dict``, or a dict) as JSON.

    NaN and infinity become ``null``. With ``path``, the JSON is also written
    atomically to that file.
    """
    doc = _jsonable(result)
    text = json.dumps(doc, indent=indent, allow_nan=False) + "\n"
    if path is not None:
        from poreprobe.io.writer import write_output

        write_output(path, text, kind="json", payload=doc)
    return text


def to_csv(
    header: Sequence[str], rows: Iterable[Sequence], path=None, comments: Sequence[str] = ()
) -> str:
    """Serialise rows as CSV (NaN as empty cells), optionally written atomically.

    ``comments`` become leading ``# ...`` lines (units, radius set, caveats).
    """
    buf = io.StringIO()
    for line in comments:
        buf.write(f"# {line}\n")
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(header)
    for row in rows:
        writer.writerow(
            [
                ""
                if isinstance(v, float) and not math.isfinite(v)
                else (f"{v:.6g}" if isinstance(v, float) else v)
                for v in row
            ]
        )
    text = buf.getvalue()
    if path is not None:
        from poreprobe.io.writer import write_output

        write_output(path, text, kind="csv")
    return text


def profile_csv(profile, path=None) -> str:
    """CSV of a :class:`~poreprobe.geometry.profile.RadiusProfile`.

    Columns: s, radius, centre (Å), ``occluded`` (1 where no point of the plane is free;
    its radius is then 0) and the signed clearance (negative: overlap depth, Å).
    """
    rows = (
        (float(s), float(r), *map(float, c), int(o), float(sc))
        for s, r, c, o, sc in zip(
            profile.s_A,
            profile.radius_A,
            profile.center_A,
            profile.occluded,
            profile.signed_clearance_A,
            strict=True,
        )
    )
    comments = (
        f"poreprobe {profile.version} radius profile of {profile.source}",
        f"radius set: {profile.radius_set}; model-based estimate; lengths in Å",
        f"axis method: {profile.axis.method}",
        "occluded planes (no free point) have radius 0; signed_clearance_A < 0 is the "
        "depth of the atoms' overlap there",
    )
    return to_csv(
        (
            "s_A",
            "radius_A",
            "center_x_A",
            "center_y_A",
            "center_z_A",
            "occluded",
            "signed_clearance_A",
        ),
        rows,
        path,
        comments,
    )


def check_suffix(path, suffixes, what: str) -> str:
    """The lower-case suffix of ``path`` if it is one of ``suffixes`` (InputError otherwise)."""
    path = os.fspath(path)
    suffix = os.path.splitext(path)[1].lower()
    if suffix not in suffixes:
        raise InputError(f"{what} file must end in {', '.join(suffixes)}; got {path!r}")
    return suffix
