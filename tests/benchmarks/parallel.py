"""B6: B3 on Dask: 1 thread, 2 threads, and a 2-worker local distributed cluster."""

from __future__ import annotations

import threading

import dask
import numpy as np

import frameshift
from tests.benchmarks.data import grid_shape, grid_winds
from tests.benchmarks.harness import Row, median_time, not_available, verdict
from tests.benchmarks.terms import accelerations_function

__all__ = ["run"]

TARGET = ">= 1.6"


def _persist_and_wait(collection, client=None):
    if client is None:
        return dask.persist(collection)[0]
    from distributed import wait

    out = client.persist(collection)
    wait(out)
    return out


def _case(label: str, fn, ds, repeats: int) -> list[Row]:
    """Time ``fn(ds)`` persisted: threads 1 and 2, and two worker processes."""
    sizes = f"{ds['ua'].size:.0e} points {tuple(ds['ua'].shape)}, chunks {dict(ds.chunks)}"
    t = {}
    for threads in (1, 2):
        with dask.config.set(scheduler="threads", num_workers=threads):
            t[f"{threads} thread(s)"], _ = median_time(lambda: _persist_and_wait(fn(ds)), repeats)
    from distributed import Client, LocalCluster

    with (
        LocalCluster(
            n_workers=2,
            threads_per_worker=1,
            processes=True,
            dashboard_address=None,
            memory_limit="6GiB",
        ) as cluster,
        Client(cluster) as client,
    ):
        remote = client.persist(ds)  # the data live on the workers, as they would
        from distributed import wait

        wait(remote)
        t["distributed 2 workers"], _ = median_time(
            lambda: _persist_and_wait(fn(remote), client), repeats
        )
    one = t["1 thread(s)"]
    threads = one / t["2 thread(s)"]
    workers = one / t["distributed 2 workers"]
    reps = str(repeats)
    return [
        Row("B6", f"{label}: 2 threads", sizes, reps, threads, "speed-up over 1 thread",
            TARGET, verdict(threads, at_least=1.6), t),
        Row("B6", f"{label}: 2 distributed workers", sizes, reps, workers,
            "speed-up over 1 thread", TARGET, verdict(workers, at_least=1.6), t,
            note="input persisted on the workers; results persisted there (no gather)"),
    ]  # fmt: skip


def _ceiling(repeats: int) -> Row:
    """What two threads give on this machine right now: in-cache np.sin, no memory traffic."""
    x = np.random.default_rng(0).random(1 << 14)

    def work(n: int = 2000) -> None:
        for _ in range(n):
            np.sin(x)

    def two() -> None:
        threads = [threading.Thread(target=work) for _ in range(2)]
        for t in threads:
            t.start()
        for t in threads:
            t.join()

    t1, _ = median_time(lambda: (work(), work()), repeats)
    t2, _ = median_time(two, repeats)
    ratio = t1 / t2
    return Row("B6", "machine ceiling: 2 threads of in-cache np.sin", "2 x 2000 np.sin of 16k",
               str(repeats), ratio, "speed-up over 1 thread", "(reference)", "info",
               {"1 thread": t1, "2 threads": t2},
               note="what the two cores give during the run (other processes count)")  # fmt: skip


def run(quick: bool) -> list[Row]:
    points = 10**6 if quick else 10**7
    repeats = 3 if quick else 5
    nlev = grid_shape(points)[1]
    # four chunks of 2.5e6 points (20 MB per variable): two per core; with 20 chunks of
    # 0.5e6 the distributed scheduler's per-task work competes with both workers for
    # the two cores and the cluster ends slower than one thread
    ds = grid_winds(points, upward=True).chunk({"z": max(1, nlev // 4)})
    accel = accelerations_function()
    rows = [_ceiling(repeats)]
    if accel is None:
        rows.append(
            not_available("B6", "terms on Dask", "apparent_accelerations not found", TARGET)
        )
    else:
        rows += _case("apparent_accelerations", accel, ds, repeats)
    rows += _case(
        "to_inertial(basis='cartesian') (extra)",
        lambda d: frameshift.to_inertial(d, basis="cartesian"),
        ds,
        repeats,
    )
    return rows
