"""Tests of poreprobe.scale.parallel: every backend gives the same trajectory and batch results.

One real dask.distributed LocalCluster (2 worker processes, 1 thread each) is started
for this module; the client backend reaches it through its scheduler address, as it
would reach a remote cluster.
"""

from __future__ import annotations

import warnings

import MDAnalysis
import numpy as np
import pytest
from _trajectory_data import RING_Z_A, frame_coords, grm_models_path, ring_radii, write_trajectory

from poreprobe.cli.main import main
from poreprobe.errors import InputError
from poreprobe.scale.batch import profile_files
from poreprobe.scale.parallel import DaskClientBackend, open_backend
from poreprobe.scale.trajectory import PoreProfileAnalysis, profile_trajectory

pytestmark = pytest.mark.filterwarnings(
    "ignore:Reader has no dt information", "ignore:.*gives no time step"
)

RESULT_KEYS = (
    "radius_A",
    "min_radius_A",
    "min_s_A",
    "fit_rmsd_A",
    "capture_radius_A",
    "axis_point_A",
    "axis_direction",
    "mean_radius_A",
    "sd_radius_A",
    "percentile_radius_A",
    "n_enclosed",
    "closed_frames",
)


@pytest.fixture(scope="module")
def cluster():
    import logging

    from distributed import LocalCluster

    with LocalCluster(
        n_workers=2,
        threads_per_worker=1,
        processes=True,
        dashboard_address=None,
        scheduler_kwargs={"dashboard": False},
        silence_logs=logging.ERROR,
    ) as local:
        yield local


@pytest.fixture(scope="module")
def client(cluster):
    from distributed import Client

    with Client(cluster.scheduler_address) as remote:  # by address, as for a remote cluster
        remote.wait_for_workers(2)
        yield remote


@pytest.fixture(scope="module")
def breathing(tmp_path_factory):
    return write_trajectory(tmp_path_factory.mktemp("breathing"))


def universe(*files):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return MDAnalysis.Universe(*files)


def run_all_backends(files, client, selection, step=None, **options):
    """Results of one analysis on serial, multiprocessing, built-in dask and our client."""
    runs = {
        "serial": {},
        "multiprocessing": {"backend": "multiprocessing", "n_workers": 2},
        "dask": {"backend": "dask", "n_workers": 2},
        "client": {"backend": DaskClientBackend(client), "unsupported_backend": True, "n_parts": 3},
    }
    out = {}
    for name, kwargs in runs.items():
        ana = PoreProfileAnalysis(universe(*files).select_atoms(selection), **options)
        out[name] = ana.run(step=step, **kwargs)
    return out


def assert_same_results(runs):
    ref = runs["serial"]
    for name, ana in runs.items():
        np.testing.assert_array_equal(ana.frames, ref.frames, err_msg=name)
        for key in RESULT_KEYS:
            np.testing.assert_array_equal(
                ana.results[key], ref.results[key], err_msg=f"{name}: {key}"
            )
        assert ana.results.min_radius_mean_A == ref.results.min_radius_mean_A


def test_grm_models_identical_on_every_backend(client):
    runs = run_all_backends([grm_models_path()], client, "all", step=2, step_A=1.0)
    np.testing.assert_array_equal(runs["serial"].frames, [0, 2, 4, 6, 8, 10])
    assert np.isfinite(runs["serial"].results.min_radius_A).all()
    assert_same_results(runs)


def test_breathing_identical_on_every_backend(client, breathing):
    runs = run_all_backends(breathing, client, "protein", step_A=0.5, axis_mode="per-frame")
    np.testing.assert_array_equal(runs["serial"].results.closed_frames, [2, 10])
    assert_same_results(runs)


def test_client_backend_runs_on_both_workers(client, breathing):
    ana = PoreProfileAnalysis(universe(*breathing).select_atoms("protein"), step_A=0.5)
    backend = DaskClientBackend(client)
    assert backend.n_workers == 2  # counted from the scheduler
    seen = backend.apply(_worker_address, [1, 2, 3, 4])
    assert set(seen) == set(client.scheduler_info(n_workers=-1)["workers"])
    ana.run(backend=backend, unsupported_backend=True, n_parts=4, stop=8)
    assert list(ana.frames) == list(range(8))


def _worker_address(_):
    import time

    from distributed import get_worker

    time.sleep(0.2)  # long enough for the scheduler to use both workers
    return get_worker().address


def test_client_backend_checks_its_client():
    with pytest.raises(ValueError, match="client must be a dask.distributed.Client"):
        DaskClientBackend(object(), n_workers=2)


def test_client_backend_needs_unsupported_flag(client, breathing):
    ana = PoreProfileAnalysis(universe(*breathing).select_atoms("protein"), step_A=0.5)
    with pytest.raises(ValueError, match="unsupported_backend=True"):
        ana.run(backend=DaskClientBackend(client))


def test_profile_trajectory_through_scheduler_address(cluster, breathing):
    options = {"step_A": 0.5, "stop": 4, "capture_probe_radius_A": 1.0}
    serial = profile_trajectory(*breathing, **options)
    remote = profile_trajectory(
        *breathing, backend="dask", scheduler=cluster.scheduler_address, n_workers=None, **options
    )
    np.testing.assert_array_equal(remote.radius_A, serial.radius_A)
    np.testing.assert_array_equal(remote.capture_radius_A, serial.capture_radius_A)
    assert np.isfinite(serial.capture_radius_A).all()
    np.testing.assert_array_equal(remote.frames, np.arange(4))


def test_batch_same_on_every_backend(client, tmp_path):
    from poreprobe.geometry.synthetic import ring_stack
    from poreprobe.io.structure_writer import write_structure

    for t in range(3):
        stack = ring_stack(ring_radii(t), RING_Z_A, atoms_per_ring=32, chains=4)
        write_structure(stack.with_coords(frame_coords(t)), tmp_path / f"model_{t}.pdb")
    (tmp_path / "model_9.pdb").write_text("ATOM      1  CA  ALA A   1     not numbers\n")
    files = [str(tmp_path / "model_*.pdb")]
    serial = profile_files(files, step_A=0.5)
    pool = profile_files(files, step_A=0.5, backend="multiprocessing", n_workers=2)
    remote = profile_files(files, step_A=0.5, backend=DaskClientBackend(client))
    assert [r.ok for r in serial.rows] == [True, True, True, False]
    for other in (pool, remote):  # repr: NaN fields of failed rows compare equal
        assert [repr(row) for row in other.rows] == [repr(row) for row in serial.rows]


def test_cli_traj_with_scheduler(cluster, breathing, tmp_path, capsys):
    out = tmp_path / "remote.json"
    code = main(
        [
            "traj",
            breathing[0],
            "--trajectory",
            breathing[1],
            "--step-A",
            "0.5",
            "--frame-stop",
            "4",
            "--scheduler",
            cluster.scheduler_address,
            "--json",
            str(out),
            "--quiet",
        ]
    )
    assert code == 0
    assert out.exists()
    assert capsys.readouterr().err == ""


def test_open_backend_rejects_bad_requests():
    with pytest.raises(InputError, match="backend must be one of serial, multiprocessing, dask"):
        with open_backend("threads"):
            pass
    with pytest.raises(InputError, match="needs backend 'dask'"):
        with open_backend("multiprocessing", scheduler="tcp://127.0.0.1:1"):
            pass
    with pytest.raises(InputError, match="n_workers must be >= 1"):
        with open_backend("multiprocessing", n_workers=0):
            pass


def _square(x):
    return x * x


@pytest.mark.parametrize("name", ["serial", "multiprocessing"])
def test_local_backends_keep_task_order(name):
    with open_backend(name, n_workers=2) as backend:
        assert backend.apply(_square, [3, 1, 2, 5]) == [9, 1, 4, 25]


def test_client_backend_keeps_task_order_and_raises_task_errors(client):
    backend = DaskClientBackend(client)
    assert backend.apply(_square, [3, 1, 2, 5]) == [9, 1, 4, 25]
    with pytest.raises(TypeError):
        backend.apply(_square, [2, "x"])


def test_unreachable_scheduler_is_one_clear_error():
    with pytest.raises(InputError, match="cannot connect to the dask scheduler at"):
        with open_backend("dask", scheduler="tcp://127.0.0.1:9", connect_timeout_s=1):
            pass
