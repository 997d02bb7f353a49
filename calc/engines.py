"""Where the work of a study runs: this process, local worker processes, or a dask cluster.

A study splits its work into chunks and hands :func:`map_chunks` one picklable function,
one picklable value every chunk shares, and the chunks.  The results come back in the
chunks' order whatever the engine, so a study gives the same numbers everywhere.

- ``"local"``: this process, chunk after chunk.
- ``"processes"``: local worker processes (started fresh, ``spawn``), one per core.
- ``"dask"``: a dask cluster (the optional extra ``beamtone[cluster]``): a local cluster
  of worker processes by default, or the scheduler at ``address`` for an existing one.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from typing import Any, TypeVar

from beamtone.calc.errors import InputError

__all__ = ["ENGINES", "split", "map_chunks"]

ENGINES = ("auto", "local", "processes", "dask")

T = TypeVar("T")
Chunk = TypeVar("Chunk", bound=Sequence[Any])


def split(items: Chunk, count: int) -> list[Chunk]:
    """``items`` in at most ``count`` consecutive chunks of nearly equal size."""
    size = max(1, math.ceil(len(items) / max(1, count)))
    return [items[i : i + size] for i in range(0, len(items), size)]  # type: ignore[misc]


def map_chunks(
    function: Callable[[Any, Any], T],
    shared: object,
    chunks: Sequence[Any],
    engine: str,
    workers: int,
    address: str | None = None,
    progress: Callable[[int, int], None] | None = None,
) -> tuple[list[T], str]:
    """``[function(shared, chunk) for chunk in chunks]`` on the chosen engine.

    Parameters
    ----------
    function : callable
        A module-level function (it travels to other processes by name).
    shared : object
        Sent once to every worker.
    chunks : sequence
        Each a sized piece of the work.
    engine : str
        ``"local"``, ``"processes"`` or ``"dask"``.
    workers : int
        Worker processes (local processes and a local dask cluster).
    address : str, optional
        A dask scheduler address; default a local cluster.
    progress : callable, optional
        Called with (items done, items in all) as chunks finish.

    Returns
    -------
    results : list
        In the order of ``chunks``.
    where : str
        Where the work ran, in words.

    Raises
    ------
    InputError
        For an unknown engine, or dask asked for where it is not installed.
    """
    total = sum(len(c) for c in chunks)
    if engine == "local":
        out = []
        done = 0
        for chunk in chunks:
            out.append(function(shared, chunk))
            done += len(chunk)
            if progress:
                progress(done, total)
        return out, "this process"
    if engine == "processes":
        import concurrent.futures
        import multiprocessing

        context = multiprocessing.get_context("spawn")
        with concurrent.futures.ProcessPoolExecutor(workers, mp_context=context) as pool:
            futures = [pool.submit(function, shared, c) for c in chunks]
            out = _collect(futures, chunks, total, progress, concurrent.futures.as_completed)
        return out, f"{workers} local processes"
    if engine == "dask":
        return _dask(function, shared, chunks, workers, address, total, progress)
    raise InputError("--engine", engine, "one of " + ", ".join(ENGINES))


def _collect(
    futures: list[Any],
    chunks: Sequence[Any],
    total: int,
    progress: Callable[[int, int], None] | None,
    as_completed: Callable[[list[Any]], Any],
) -> list[Any]:
    index = {id(f): i for i, f in enumerate(futures)}
    out: list[Any] = [None] * len(futures)
    done = 0
    for fut in as_completed(futures):
        i = index[id(fut)]
        out[i] = fut.result()
        done += len(chunks[i])
        if progress:
            progress(done, total)
    return out


def _dask(
    function: Callable[[Any, Any], T],
    shared: object,
    chunks: Sequence[Any],
    workers: int,
    address: str | None,
    total: int,
    progress: Callable[[int, int], None] | None,
) -> tuple[list[T], str]:
    try:
        from dask.distributed import Client, LocalCluster, as_completed
    except ImportError:
        raise InputError(
            "--engine", "dask", "the optional extra for clusters: pip install 'beamtone[cluster]'"
        ) from None
    cluster = None
    try:
        if address:
            client = Client(address, timeout="20s")
            where = f"dask cluster at {address}"
        else:
            cluster = LocalCluster(
                n_workers=workers, threads_per_worker=1, processes=True, dashboard_address=None
            )
            client = Client(cluster)
            where = f"local dask cluster of {workers} workers"
    except (OSError, TimeoutError) as exc:
        if cluster is not None:
            cluster.close()
        raise InputError(
            "--address", address or "local cluster", "a dask scheduler that answers", str(exc)
        ) from None
    try:
        handle = client.scatter(shared, broadcast=True)
        futures = [client.submit(function, handle, c, pure=False) for c in chunks]
        out = _collect(futures, chunks, total, progress, as_completed)
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
    return out, where
