"""A sweep on a running Dask scheduler survives a worker killed mid-sweep: tasks rerun, nothing lost."""

import os
import signal
import threading
import time
from dataclasses import dataclass

import numpy as np
import pytest

from dipolearray.sweep import RandomDispersion, load_sweep, run_sweep

POINTS = [{"volume_fraction": v, "eps_inclusion": 12.0, "eps_host": 2.0} for v in (0.1, 0.2, 0.25)]
OPTS = {"rtol": 1e-10}


@dataclass(frozen=True)
class Slow:
    """A scene maker that takes a while, so the kill lands while tasks are running."""

    delay_s: float = 0.6

    def __call__(self, point, seed):
        time.sleep(self.delay_s)
        return RandomDispersion(n_bodies=40)(point, seed)


@pytest.mark.slow
def test_killed_worker_reruns_its_tasks_and_the_file_is_complete(tmp_path):
    distributed = pytest.importorskip("distributed")
    cluster = distributed.LocalCluster(
        n_workers=3, threads_per_worker=1, processes=True, dashboard_address=None, silence_logs=40
    )
    client = distributed.Client(cluster)
    try:
        pids = client.run(os.getpid)
        result = {}

        def sweep():
            result["res"] = run_sweep(
                tmp_path / "cluster.h5", Slow(), POINTS, 4, seed=5, solve_options=OPTS,
                scheduler=cluster.scheduler_address, progress=False,
            )  # fmt: skip

        t = threading.Thread(target=sweep)
        t.start()
        # Wait until tasks are running on the workers, then kill one worker process outright.
        deadline = time.time() + 60
        while time.time() < deadline:
            processing = client.processing()
            if sum(len(v) for v in processing.values()) >= 3:
                break
            time.sleep(0.05)
        victim = next(iter(pids.values()))
        os.kill(victim, signal.SIGKILL)
        t.join(timeout=240)
        assert not t.is_alive()
        res = result["res"]
        assert list(res.n) == [4, 4, 4]
        # Every realization equals the one computed in this process from the same seed.
        ref = run_sweep(tmp_path / "serial.h5", Slow(0.0), POINTS, 4, seed=5, solve_options=OPTS,
                        workers=0, progress=False)  # fmt: skip
        for a, b in zip(res.tensors, ref.tensors, strict=True):
            np.testing.assert_allclose(a, b, rtol=1e-12, atol=1e-14)
        seeds = [sorted(r["seed"] for r in recs) for recs in load_sweep(tmp_path / "cluster.h5").records]
        assert seeds == [sorted(r["seed"] for r in recs) for recs in ref.records]
        assert victim not in client.run(os.getpid).values()  # the nanny replaced the killed worker
    finally:
        client.close()
        cluster.close()
