"""The radius profile figure with the chemistry panels under it."""

from __future__ import annotations

import pytest
from _real_channels import channel

from poreprobe.chemistry.chemistry import pore_chemistry
from poreprobe.errors import InputError
from poreprobe.figures.chemistry_panel import plot_profile_chemistry, save_profile_chemistry


def test_three_panels_share_s(tmp_path):
    atoms, prof = channel("5klg")
    result = prof.to_dict() | {"chemistry": pore_chemistry(atoms, prof).to_dict()}
    fig = plot_profile_chemistry(result)
    radius_ax, charge_ax, energy_ax = fig.axes[:3]
    assert radius_ax.get_xlim() == energy_ax.get_xlim()
    assert "charge" in charge_ax.get_ylabel().lower()
    assert "kT" in energy_ax.get_ylabel()
    assert "crude" in energy_ax.get_title(loc="left")
    path = tmp_path / "chem.svg"
    save_profile_chemistry(result, path)
    assert path.read_text().lstrip().startswith("<?xml")


def test_needs_chemistry():
    _, prof = channel("5klg")
    with pytest.raises(InputError, match="holds no 'chemistry' object"):
        plot_profile_chemistry(prof)
