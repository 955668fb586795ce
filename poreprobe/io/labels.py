"""Chain-aware residue labels for text, tables and figures.

Residues are labelled ``"A:LEU12"`` inside poreprobe (chain, residue name, number,
insertion code). For people they are written with the residue name in title case
and the chains in brackets, copies of one residue in several chains grouped:

* ``"Thr75 (A-D)"``: the same residue in chains A, B, C and D, a consecutive run of
  the chains (in natural sorted order of the ids present);
* ``"Leu12 (A, C)"``: chains that are not a run of three or more;
* ``"Trp15 (A)"``: one chain.

A run is written with a dash when it covers three or more consecutive chains:
successive in ``chain_order`` when that is given, else successive ids (``B`` after
``A``, ``C3`` after ``C2``).
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Sequence

from poreprobe.errors import InputError

_LABEL = re.compile(r"^(?P<chain>[^:]*):(?P<resname>[A-Za-z0-9+\-]+?)(?P<number>-?\d+[A-Za-z]?)$")


def _natural_key(chain: str):
    return [(0, int(t), "") if t.isdigit() else (1, 0, t) for t in re.findall(r"\d+|\D+", chain)]


def parse_label(label: str) -> tuple[str, str, str]:
    """Split ``"A:LEU12"`` into (chain, residue name, number with insertion code).

    Raises
    ------
    InputError
        If the label does not have the ``chain:NAMEnumber`` form.
    """
    m = _LABEL.match(str(label))
    if not m:
        raise InputError(f"residue label must look like 'A:LEU12', got {label!r}")
    return m.group("chain"), m.group("resname"), m.group("number")


def residue_name(resname: str, number: str | int) -> str:
    """``("LEU", 12)`` -> ``"Leu12"``."""
    return f"{str(resname).capitalize()}{number}"


def _follows(prev: str, cur: str) -> bool:
    """True when chain id ``cur`` is the successor of ``prev`` (B after A, C3 after C2)."""
    a, b = re.match(r"(.*?)(\d*)$", prev), re.match(r"(.*?)(\d*)$", cur)
    if a.group(2) and b.group(2):
        return a.group(1) == b.group(1) and int(b.group(2)) == int(a.group(2)) + 1
    if a.group(2) or b.group(2):
        return False
    return len(prev) == len(cur) and prev[:-1] == cur[:-1] and ord(cur[-1]) == ord(prev[-1]) + 1


def chain_span(chains: Iterable[str], chain_order: Sequence[str] | None = None) -> str:
    """``["A", "B", "C", "D"]`` -> ``"A-D"``; ``["A", "C"]`` -> ``"A, C"``.

    Consecutive means successive in ``chain_order`` when it is given (all chains of the
    model), else successive ids (``B`` after ``A``, ``C3`` after ``C2``).
    """
    if chain_order is not None:
        rank = {c: i for i, c in enumerate(chain_order)}

        def follows(p, c):
            return p in rank and c in rank and rank[c] == rank[p] + 1

        have = sorted(set(chains), key=lambda c: (rank.get(c, len(rank)), _natural_key(c)))
    else:
        follows = _follows
        have = sorted(set(chains), key=_natural_key)
    parts, run = [], []
    for c in have:
        if run and follows(run[-1], c):
            run.append(c)
            continue
        if run:
            parts.append(run)
        run = [c]
    if run:
        parts.append(run)
    text = []
    for r in parts:
        text += [f"{r[0]}-{r[-1]}"] if len(r) >= 3 else list(r)
    return ", ".join(text)


def group_labels(labels: Iterable[str], *, chain_order: Sequence[str] | None = None) -> list[str]:
    """Chain-aware labels, copies of one residue grouped, in order of first appearance.

    Parameters
    ----------
    labels : iterable of str
        Residue labels ``"A:LEU12"``.
    chain_order : sequence of str, optional
        All chains of the model, for deciding what a consecutive run is.

    Returns
    -------
    list of str
        E.g. ``["Thr75 (A-D)", "Trp15 (A)"]``.
    """
    groups: dict[tuple[str, str], list[str]] = {}
    for label in labels:
        chain, resname, number = parse_label(label)
        groups.setdefault((resname, number), []).append(chain)
    return [
        f"{residue_name(resname, number)} ({chain_span(chains, chain_order)})"
        for (resname, number), chains in groups.items()
    ]


def summarise_labels(
    labels: Iterable[str], *, limit: int | None = 3, chain_order: Sequence[str] | None = None
) -> str:
    """Grouped labels joined by commas, the ones past ``limit`` counted: ``"+2 more"``."""
    parts = group_labels(labels, chain_order=chain_order)
    if limit is not None and len(parts) > limit:
        parts = parts[:limit] + [f"+{len(parts) - limit} more"]
    return ", ".join(parts)
