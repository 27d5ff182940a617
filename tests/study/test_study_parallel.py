"""The same study solved in this process, by a local process pool and on a local Dask
cluster gives the same figures (each variant is solved alone, wherever it runs); local workers
start with one thread each."""
from __future__ import annotations

import pytest

from hingeline._cli.main import main

from study_inputs import ALONG_AXIS, MESH, read_rows, write_study

TWO = ALONG_AXIS.replace("x = [0.8, 3.2]", "x = [0.8, 1.4]")
FIGURES = ("x", "y", "load_factor", "lower_bound", "gap", "status", "variant")


@pytest.fixture(scope="module")
def in_process(tmp_path_factory):
    folder = tmp_path_factory.mktemp("serial")
    study = write_study(folder, TWO)
    assert main(["study", str(study), "-o", str(folder / "out"), "--mesh-size", MESH, "--jobs", "1"]) == 0
    return study, read_rows(folder / "out" / "study.csv")


def _same(a, b):
    assert len(a) == len(b) == 2
    for ra, rb in zip(a, b):
        for col in FIGURES:
            if col in ("load_factor", "lower_bound", "gap"):
                assert float(ra[col]) == pytest.approx(float(rb[col]), rel=1e-6)
            else:
                assert ra[col] == rb[col]


def test_process_pool(tmp_path, in_process):
    study, rows = in_process
    assert main(["study", str(study), "-o", str(tmp_path / "out"), "--mesh-size", MESH, "--jobs", "2"]) == 0
    _same(rows, read_rows(tmp_path / "out" / "study.csv"))


def test_dask_local_cluster(tmp_path, in_process):
    distributed = pytest.importorskip("distributed")
    study, rows = in_process
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=False,
                                  dashboard_address=None) as cluster:
        assert main(["study", str(study), "-o", str(tmp_path / "out"), "--mesh-size", MESH,
                     "--scheduler", cluster.scheduler_address]) == 0
    _same(rows, read_rows(tmp_path / "out" / "study.csv"))


def test_unreachable_scheduler(tmp_path, capsys, monkeypatch):
    pytest.importorskip("distributed")
    from hingeline.study import run
    monkeypatch.setattr(run, "CONNECT_TIMEOUT", "1s")
    study = write_study(tmp_path, TWO)
    assert main(["study", str(study), "-o", str(tmp_path / "out"), "--scheduler", "tcp://127.0.0.1:9"]) == 2
    err = capsys.readouterr().err
    assert "--scheduler tcp://127.0.0.1:9" in err and "Traceback" not in err
    assert not (tmp_path / "out").exists()


def _thread_settings() -> dict:
    import os
    return {k: os.environ.get(k) for k in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")}


def test_workers_start_with_one_thread_each(monkeypatch):
    """Local workers are started with one BLAS/OpenMP thread each; this process's own
    environment is as it was afterwards."""
    import multiprocessing
    import os
    from concurrent.futures import ProcessPoolExecutor

    from hingeline.study import run

    monkeypatch.setenv("OPENBLAS_NUM_THREADS", "7")
    monkeypatch.delenv("OMP_NUM_THREADS", raising=False)
    with run._worker_environment():
        with ProcessPoolExecutor(1, mp_context=multiprocessing.get_context("spawn")) as pool:
            seen = pool.submit(_thread_settings).result()
    assert seen == {"OMP_NUM_THREADS": "1", "OPENBLAS_NUM_THREADS": "1", "MKL_NUM_THREADS": "1"}
    assert os.environ["OPENBLAS_NUM_THREADS"] == "7" and "OMP_NUM_THREADS" not in os.environ


def test_highs_runs_one_thread():
    from hingeline.upper.highs import new_model, option
    assert option(new_model(3, ipm=True), "threads") == 1
    assert option(new_model(3, ipm=False), "threads") == 1
