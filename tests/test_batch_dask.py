"""A bulk run on a Dask cluster (dask.distributed LocalCluster of two worker processes) gives the same
results, in the same order, as the run in this process. Input: the NCI sample that ships with rdkit."""
from __future__ import annotations

import itertools
import os

import pytest
from rdkit import RDConfig

from equivclass.batch import record_dict, run
from equivclass.options import make_options
from equivclass.records import read_records

distributed = pytest.importorskip("distributed")

NCI_SMI = os.path.join(RDConfig.RDDataDir, "NCI", "first_5K.smi")


@pytest.fixture(scope="module")
def cluster():
    with distributed.LocalCluster(n_workers=2, processes=True, threads_per_worker=1,
                                  dashboard_address=None, host="127.0.0.1") as c:
        yield c


def _records():
    recs = list(itertools.islice(read_records(NCI_SMI, layout="smiles"), 48))
    return recs


def test_cluster_run_equals_local_run(cluster):
    opts = make_options()
    local = [record_dict(r) for r in run(_records(), opts)]
    remote = [record_dict(r) for r in run(_records(), opts, scheduler=cluster.scheduler_address, chunk_size=4)]
    assert [r["record"] for r in remote] == list(range(1, 49))
    assert remote == local


def test_cluster_run_through_the_command(cluster, tmp_path):
    from click.testing import CliRunner

    from equivclass.cli import main

    src = tmp_path / "lib.smi"
    src.write_text("CCOC(C)=O solvent\nC1CC bad\nc1ccc(F)cc1 arene\n")
    args = ["batch", str(src), "--format", "csv"]
    local = CliRunner().invoke(main, args)
    remote = CliRunner().invoke(main, args + ["--cluster", cluster.scheduler_address])
    assert remote.exit_code == 0 and remote.stdout == local.stdout
    assert "3 records, 1 errors" in remote.stderr


def test_unreachable_scheduler_is_one_line_error(tmp_path, monkeypatch):
    from click.testing import CliRunner

    from equivclass import batch
    from equivclass.cli import main

    monkeypatch.setattr(batch, "CONNECT_TIMEOUT", "2s")

    src = tmp_path / "lib.smi"
    src.write_text("CCO\n")
    res = CliRunner().invoke(main, ["batch", str(src), "--cluster", "tcp://127.0.0.1:9"])
    assert res.exit_code == 2 and "cannot connect" in res.stderr
