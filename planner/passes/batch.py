"""The batch engine's plumbing: chunk planning, worker processes and handing results back.

Satellites sharing a grid step are cut into chunks whose SGP4 output stays under about
150 MB, whatever the catalog size; chunks are spread over worker processes (one per
core, none below 200 satellites). A worker writes its track samples to a file on a RAM
file system (/dev/shm on Linux) that the calling process maps copy-on-write instead of
unpickling a copy; no such file is left behind when a run stops early.
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from concurrent.futures import ProcessPoolExecutor

import numpy as np

from planner.passes.chunk import _ChunkJob, _run_chunk
from planner.passes.model import _SAMPLE_COLUMNS, _SAMPLE_DTYPE
from planner.passes.search import _perigee_period_s, _search_grid, coarse_step_s

_CHUNK_BYTES = 150e6  # arrays of one chunk (SGP4 output) stay under this
_BYTES_PER_SAMPLE = 49  # TEME r and v (6 float64) + the error code (uint8)
_IN_PROCESS_SATELLITES = 200  # fewer satellites than this: no worker processes


# --------------------------------------------------------------------------- handing results back


def _run_chunk_in_worker(job: _ChunkJob, shared_dir: str | None):
    """``_run_chunk`` in a worker process, its track samples handed back cheaply.

    The samples (most of the result) go into a file in ``shared_dir`` (a RAM file
    system) that the calling process maps instead of unpickling a copy; without one,
    or when it lacks room, they travel pickled.
    """
    result, failures = _run_chunk(job)
    samples = result["samples"]
    path = _write_samples(samples, shared_dir) if shared_dir and samples.size else None
    if path is not None:
        del result["samples"]
        result["samples_file"] = path
    return result, failures


def _write_samples(samples: np.ndarray, folder: str) -> str | None:
    import tempfile

    path = None
    try:
        free = os.statvfs(folder)
        if free.f_bavail * free.f_frsize < 2 * samples.nbytes + (64 << 20):
            return None
        fd, path = tempfile.mkstemp(prefix="planner-passes-", suffix=".f4", dir=folder)
        with os.fdopen(fd, "wb") as out:
            out.write(np.ascontiguousarray(samples).data)  # the array's buffer, no copy
        return path
    except OSError:
        if path is not None:
            _unlink_quietly(path)
        return None


def _unlink_quietly(path: str) -> None:
    try:
        os.unlink(path)
    except OSError:
        pass


def _take_samples(result: dict) -> None:
    """Put the track samples of a chunk's result back in place (mapped from their file)."""
    path = result.pop("samples_file", None)
    if path is None:
        return
    import mmap

    shape = (len(_SAMPLE_COLUMNS), int(result["offsets"][-1]))
    size = shape[0] * shape[1] * np.dtype(_SAMPLE_DTYPE).itemsize
    try:
        with open(path, "rb") as source:
            mapped = mmap.mmap(
                source.fileno(), size, flags=mmap.MAP_PRIVATE, prot=mmap.PROT_READ | mmap.PROT_WRITE
            )  # copy-on-write: writable arrays
    finally:
        _unlink_quietly(path)  # the mapping keeps the data until the last array goes
    result["samples"] = np.frombuffer(mapped, dtype=_SAMPLE_DTYPE).reshape(shape)


def _shared_dir() -> str | None:
    """A RAM file system for handing samples back (Linux), or None."""
    import sys

    folder = "/dev/shm"
    if sys.platform.startswith("linux") and os.path.isdir(folder) and os.access(folder, os.W_OK):
        return folder
    return None


# --------------------------------------------------------------------------- planning and running


def _worker_count() -> int:
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):
        return max(1, os.cpu_count() or 1)


def _plan_chunks(
    satrecs: Sequence, duration_s: float, *, workers: int, chunk_satellites: int | None = None
) -> list[tuple[float, np.ndarray]]:
    """Groups of satellite indices sharing a grid step, cut into chunks.

    Returns [(grid_step_s, indices)].  A chunk's SGP4 output stays under
    ``_CHUNK_BYTES``; with several workers chunks are also made small enough that
    each worker gets a few of them.
    """
    steps = np.array([coarse_step_s(_perigee_period_s(s)) for s in satrecs])
    plan: list[tuple[float, np.ndarray]] = []
    for step in np.unique(steps):
        members = np.nonzero(steps == step)[0]
        n_time = len(_search_grid(duration_s, float(step)))
        size = max(1, int(_CHUNK_BYTES // (n_time * _BYTES_PER_SAMPLE)))
        if workers > 1:
            size = min(size, max(16, -(-len(members) // (4 * workers))))
        if chunk_satellites is not None:
            size = max(1, int(chunk_satellites))
        plan.extend((float(step), members[i : i + size]) for i in range(0, len(members), size))
    return plan


def _process_context():
    """How worker processes start: fork on Linux, spawn elsewhere.

    Forking re-imports nothing (spawn re-runs the caller's main script, which then
    needs an ``if __name__ == "__main__":`` guard, and imports numpy and sgp4 again
    in every worker).  The workers start no threads and use no BLAS, and every
    satellite is rebuilt from plain numbers (``_recipe``), so what runs in a worker
    is the same whichever way it was started.  Platforms where fork is unsafe or
    missing (macOS, Windows) spawn.
    """
    import multiprocessing
    import sys

    method = "fork" if sys.platform.startswith("linux") else "spawn"
    return multiprocessing.get_context(method)


def _run_all(jobs: list[_ChunkJob], workers: int):
    """Results of every job, in order; in worker processes when ``workers`` > 1."""
    if workers <= 1 or len(jobs) <= 1:
        for job in jobs:
            yield _run_chunk(job)
        return
    try:
        pool = ProcessPoolExecutor(max_workers=min(workers, len(jobs)), mp_context=_process_context())
    except (OSError, NotImplementedError, ImportError):  # no process support here: run in-process
        for job in jobs:
            yield _run_chunk(job)
        return
    shared_dir = _shared_dir()
    with pool:
        futures = [pool.submit(_run_chunk_in_worker, job, shared_dir) for job in jobs]
        taken = 0
        try:
            for future in futures:
                result = future.result()
                taken += 1
                _take_samples(result[0])
                yield result
        finally:  # stopped early (an error, an interrupt): leave no sample files behind
            for future in futures[taken:]:
                future.cancel()
            pool.shutdown(wait=True)
            for future in futures[taken:]:
                if future.done() and not future.cancelled() and future.exception() is None:
                    path = future.result()[0].get("samples_file")
                    if path:
                        _unlink_quietly(path)
