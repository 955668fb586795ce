"""Chain-aware residue labels (poreprobe.io.labels)."""

import pytest

from poreprobe import InputError
from poreprobe.io.labels import chain_span, group_labels, parse_label, summarise_labels


def test_symmetric_ring_and_single_residue():
    labels = ["A:THR75", "B:THR75", "C:THR75", "D:THR75", "A:TRP15"]
    assert group_labels(labels) == ["Thr75 (A-D)", "Trp15 (A)"]


def test_runs_gaps_and_copied_chain_names():
    assert chain_span(["A", "C", "D"]) == "A, C, D"
    assert chain_span(["D", "A", "B", "C", "F"]) == "A-D, F"
    assert chain_span(["C2", "C1", "C4", "C3"]) == "C1-C4"
    assert chain_span(["K", "M", "L", "N"]) == "K-N"
    # with the model's chain order, a run follows that order
    assert chain_span(["A", "C"], chain_order=["A", "C", "E"]) == "A, C"
    assert chain_span(["A", "C", "E"], chain_order=["A", "C", "E"]) == "A-E"


def test_summary_counts_the_rest_and_insertion_codes():
    labels = ["A:TRP15", "A:TRP13", "B:TRP15", "A:GLY100A"]
    assert summarise_labels(labels, limit=2) == "Trp15 (A, B), Trp13 (A), +1 more"
    assert parse_label("A:GLY100A") == ("A", "GLY", "100A")


def test_bad_label():
    with pytest.raises(InputError, match="residue label"):
        parse_label("LEU12")
