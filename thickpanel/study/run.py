"""Run a study: evaluate variants in-process, on a local Dask cluster or on a given scheduler.

One code path for the pool and the cluster: ``workers > 1`` starts a loopback
``dask.distributed.LocalCluster`` (processes, one thread each); ``scheduler="tcp://HOST:PORT"``
connects to an existing one. Every worker imports the pipeline and the OCP kernel once, when the cluster
starts (:func:`warm`), and reuses them for all its variants; one task is one variant (a check takes
a few tenths of a second, so the Dask overhead per task, about a millisecond, does not count).

Rows stream to ``results.jsonl`` (one line per finished variant, flushed); ``results.csv`` and
``results.parquet`` are written atomically from it at the end and after a Ctrl-C, so an interrupted
study leaves consistent tables and a rerun skips the ids already there.
"""

from __future__ import annotations

import contextlib
import json
import logging
import math
import os
import signal
import sys
import threading
import time
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, TextIO

from .spec import Study, StudyError, Variant, variants

__all__ = ["evaluate", "flatten_metrics", "run_study", "read_rows", "write_tables", "StudyRun", "warm",
           "repair_jsonl", "TIMING_COLUMNS"]

CONNECT_TIMEOUT_S = 10.0
TIMING_COLUMNS = ("seconds", "cpu_seconds")  # the only columns that differ between two runs of one study


def flatten_metrics(metrics: dict[str, Any], prefix: str = "") -> dict[str, float | str]:
    """Every figure of a check summary's ``metrics`` as one table cell each: nested keys joined by
    ``.``, list items by ``_0``, ``_1`` ...; numbers as float, booleans as 0/1, text kept as text,
    ``None`` (not measured) left out."""
    out: dict[str, float | str] = {}
    for k, v in metrics.items():
        name = f"{prefix}{k}"
        if isinstance(v, bool):
            out[name] = float(v)
        elif isinstance(v, int | float):
            out[name] = float(v)
        elif isinstance(v, str):
            out[name] = v
        elif isinstance(v, dict):
            out.update(flatten_metrics(v, name + "."))
        elif isinstance(v, list | tuple) and all(isinstance(x, int | float) and not isinstance(x, bool) for x in v):
            out.update({f"{name}_{i}": float(x) for i, x in enumerate(v)})
    return out


def warm() -> dict[str, Any]:
    """Import what a check needs once in this process: the pipeline, the scipy parts it uses and the
    OCP kernel (a check builds its parts in memory for mass, volume and hinge fit; it needs OCP,
    not the cadquery layer above it, about 1.4 s more to import). Every later variant reuses the
    modules. Returns the process id and the seconds it took (near 0 when already imported). Run
    on every worker when a cluster starts, and before the first variant in-process."""
    t0 = time.perf_counter()
    import scipy.optimize  # noqa: F401
    import scipy.sparse  # noqa: F401
    import scipy.spatial  # noqa: F401

    from .. import build, clearance, collide, design, sat_kernel, solids  # noqa: F401 - sat_kernel loads numba

    return {"pid": os.getpid(), "seconds": round(time.perf_counter() - t0, 4)}


def local_worker_setup() -> dict[str, Any]:
    """:func:`warm` on a worker of the study's own ``LocalCluster``, which also leaves Ctrl-C
    (SIGINT, sent by a terminal to the whole process group) to the study process: that one stops
    the run, keeps the table and closes the cluster. Not used on the workers of a given scheduler."""
    if threading.current_thread() is threading.main_thread():
        signal.signal(signal.SIGINT, signal.SIG_IGN)
    return warm()


def evaluate(base: str, vid: str, toml_text: str, values: dict[str, Any]) -> dict[str, Any]:
    """Check one variant with :func:`thickpanel.build.run_check`; never raises for a bad variant.

    The row holds the axis values (``axis.KEY``), ``status``/``ok``, the error class and message
    of a failed variant, every metric of the check (``metric.NAME``, see :func:`flatten_metrics`)
    and the wall and CPU seconds of this variant (``seconds``, ``cpu_seconds``; the CPU of the whole
    process meanwhile, so on a cluster worker its scheduler-talk threads count too)."""
    from ..build import run_check
    from ..design import loads_design

    t0, c0 = time.perf_counter(), time.process_time()
    row: dict[str, Any] = {"id": vid, **{f"axis.{k}": v for k, v in values.items()}}
    try:
        s = run_check(loads_design(toml_text, source=Path(base)))
        row.update(status="ok", ok=bool(s["ok"]), error_class="", error_message="")
        row.update({f"metric.{k}": v for k, v in flatten_metrics(s["metrics"]).items()})
    except Exception as exc:  # noqa: BLE001 - a failing variant is a row, the study goes on
        row.update(status="failed", ok=False, error_class=type(exc).__name__, error_message=str(exc)[:2000])
    row["seconds"] = round(time.perf_counter() - t0, 4)
    row["cpu_seconds"] = round(time.process_time() - c0, 4)
    return row


def read_rows(path: Path) -> list[dict[str, Any]]:
    """Rows of a ``results.jsonl``; a line cut short by an interruption is dropped, and of two rows
    with one id the first is kept."""
    rows, seen = [], set()
    if path.exists():
        for line in path.read_text(encoding="utf-8", errors="replace").splitlines():
            try:
                r = json.loads(line)
            except json.JSONDecodeError:
                continue
            if isinstance(r, dict) and isinstance(r.get("id"), str) and r["id"] not in seen:
                seen.add(r["id"])
                rows.append(r)
    return rows


def repair_jsonl(path: Path) -> None:
    """Cut a last line left unfinished by a killed run (no trailing newline), so that the next row
    appended starts on its own line."""
    if not path.exists():
        return
    data = path.read_bytes()
    if data and not data.endswith(b"\n"):
        with open(path, "r+b") as fh:
            fh.truncate(data.rfind(b"\n") + 1)


def write_tables(rows: list[dict[str, Any]], out: Path) -> list[Path]:
    """Write ``results.csv`` and ``results.parquet`` (rows sorted by id) atomically."""
    import csv
    import io

    import pyarrow as pa
    import pyarrow.parquet as pq

    rows = sorted(rows, key=lambda r: r["id"])
    cols: list[str] = []
    for r in rows:
        cols += [k for k in r if k not in cols]
    buf = io.StringIO()
    w = csv.DictWriter(buf, fieldnames=cols, lineterminator="\n")
    w.writeheader()
    for r in rows:
        w.writerow(r)
    paths = []
    csv_path, pq_path = out / "results.csv", out / "results.parquet"
    tmp = csv_path.with_suffix(".csv.tmp")
    tmp.write_text(buf.getvalue(), encoding="utf-8")
    tmp.replace(csv_path)
    paths.append(csv_path)
    table = pa.table({c: _column([r.get(c) for r in rows]) for c in cols}) if rows else pa.table({})
    tmp = pq_path.with_suffix(".parquet.tmp")
    pq.write_table(table, tmp)
    tmp.replace(pq_path)
    paths.append(pq_path)
    return paths


def _column(cells: list[Any]) -> list[Any]:
    """One Parquet column: lists and dicts as text; a column mixing text and numbers all as text."""
    cells = [str(v) if isinstance(v, list | dict) else v for v in cells]
    kinds = {str if isinstance(v, str) else float for v in cells if v is not None and not isinstance(v, bool)}
    return [None if v is None else str(v) for v in cells] if len(kinds) > 1 else cells


@dataclass
class StudyRun:
    """What :func:`run_study` did: all rows, the ids computed in this run, the output files.

    ``timings`` holds ``start_s`` (cluster start and the per-worker imports, s), ``compute_s``
    (from the first task out to the last row in, s) and ``workers`` (processes that computed)."""

    rows: list[dict[str, Any]]
    computed: list[str]
    skipped: int
    files: list[Path]
    interrupted: bool = False
    timings: dict[str, float] = field(default_factory=dict)

    @property
    def failed(self) -> int:
        return sum(r["status"] != "ok" for r in self.rows)


class _Progress:
    def __init__(self, total: int, stream: TextIO | None):
        self.total, self.done, self.failed, self.t0 = total, 0, 0, time.perf_counter()
        self.stream = stream if stream is not None and getattr(stream, "isatty", lambda: False)() else None

    def __call__(self, row: dict[str, Any]) -> None:
        self.done += 1
        self.failed += row["status"] != "ok"
        if self.stream is None:
            return
        rem = self.total - self.done
        el = time.perf_counter() - self.t0
        eta = el / self.done * rem
        self.stream.write(f"\rstudy: {self.done} done ({self.failed} failed), {rem} remaining, ETA {eta:5.0f} s  ")
        if rem == 0:
            self.stream.write("\n")
        self.stream.flush()


@contextlib.contextmanager
def _sigint_deferred() -> Iterator[None]:
    """Hold a Ctrl-C (SIGINT) until the block ends, so the tables are written whole; re-raised after."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    got: list[int] = []
    old = signal.signal(signal.SIGINT, lambda signum, frame: got.append(signum))
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, old)
    if got:
        raise KeyboardInterrupt


def _probe(address: str, timeout: float) -> None:
    """Open and close one connection to a Dask scheduler, the handshake included, within
    ``timeout`` s. ``Client(timeout=...)`` bounds the TCP connect but not the handshake after it, so
    a port that accepts and never answers would hold it for ever; this bounds both."""
    import asyncio

    from distributed.comm import connect

    async def once() -> None:
        comm = await connect(address, timeout=timeout)
        comm.abort()

    asyncio.run(asyncio.wait_for(once(), timeout))


def _unreachable(scheduler: str, timeout: float, exc: BaseException) -> StudyError:
    if isinstance(exc, ValueError):
        return StudyError(f"--scheduler {scheduler} is not a Dask scheduler address like tcp://HOST:PORT ({exc})")
    why = f"{type(exc).__name__}: {exc}" if str(exc) else f"{type(exc).__name__}: no answer"
    return StudyError(f"--scheduler {scheduler}: cannot reach the Dask scheduler within {timeout:g} s ({why}); "
                      "check the address, that the scheduler runs and that its port is open to this machine")


def _client(workers: int, scheduler: str | None, timeout: float) -> tuple[Any, Any]:
    from dask.distributed import Client, LocalCluster

    if scheduler:
        try:
            _probe(scheduler, timeout)
            client = Client(scheduler, timeout=timeout)
        except (OSError, TimeoutError, ValueError) as exc:
            raise _unreachable(scheduler, timeout, exc) from None
        try:
            client.wait_for_workers(1, timeout=timeout)
        except (OSError, TimeoutError) as exc:
            client.close()
            raise StudyError(f"--scheduler {scheduler}: the scheduler has no workers after {timeout:g} s "
                             f"({type(exc).__name__})") from None
        return client, None
    import dask

    # no dashboard, so no use for the workers' statistical profiler (a thread sampling the task's
    # stack every 10 ms under the GIL); the workers take this configuration from here
    with dask.config.set({"distributed.worker.profile.enabled": False}):
        cluster = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True, host="127.0.0.1",
                               dashboard_address=None, silence_logs=logging.ERROR)
    return Client(cluster), cluster


def run_study(study: Study, *, workers: int | None = None, scheduler: str | None = None, limit: int | None = None,
              out: Path | None = None, progress: TextIO | None = None, connect_timeout: float = CONNECT_TIMEOUT_S,
              on_row: Callable[[dict[str, Any]], None] | None = None) -> StudyRun:
    """Evaluate every variant not yet in the study's table.

    Parameters
    ----------
    workers : int, optional
        1 runs in this process; more starts a loopback ``LocalCluster``; default all cores.
    scheduler : str, optional
        ``tcp://HOST:PORT`` of a running Dask scheduler (wins over ``workers``).
    limit : int, optional
        Compute at most this many new variants (a partial run; rerun to finish).
    connect_timeout : float
        Seconds to reach ``scheduler`` and to see its first worker.

    ``results.jsonl`` is the record: a row is appended and flushed as soon as its variant is done.
    A Ctrl-C stops the run, the tables are written from the record and ``KeyboardInterrupt`` is
    raised again; a killed run loses at most the row being written. A rerun computes only the ids
    not in the record. A variant that raises is a ``failed`` row; a task lost with its worker is
    left out (computed again by the next run) unless Dask gave up on it (``KilledWorker``).
    """
    if scheduler:  # before anything is written
        try:
            _probe(scheduler, connect_timeout)
        except (OSError, TimeoutError, ValueError) as exc:
            raise _unreachable(scheduler, connect_timeout, exc) from None
    out = Path(out or study.output)
    out.mkdir(parents=True, exist_ok=True)
    jsonl = out / "results.jsonl"
    repair_jsonl(jsonl)
    done = {r["id"] for r in read_rows(jsonl)}
    todo = [v for v in variants(study) if v.id not in done]
    skipped = len(done)
    if limit is not None:
        todo = todo[:max(0, limit)]
    workers = workers or os.cpu_count() or 1
    prog = _Progress(len(todo), progress)
    computed: list[str] = []
    timings: dict[str, float] = {}
    interrupted = False
    with open(jsonl, "a", encoding="utf-8") as fh:
        def keep(row: dict[str, Any]) -> None:
            with _sigint_deferred():
                fh.write(json.dumps(row, default=str, allow_nan=True) + "\n")
                fh.flush()
                computed.append(row["id"])
            prog(row)
            if on_row:
                on_row(row)

        try:
            if scheduler is None and workers <= 1:
                t0 = time.perf_counter()
                warm()
                t1 = time.perf_counter()
                for v in todo:
                    keep(evaluate(str(study.base), v.id, v.toml, v.values))
                timings = {"start_s": t1 - t0, "compute_s": time.perf_counter() - t1, "workers": 1.0}
            elif todo:
                timings = _distributed(study, todo, workers, scheduler, connect_timeout, keep)
        except KeyboardInterrupt:
            interrupted = True
    rows = read_rows(jsonl)
    with _sigint_deferred():
        files = write_tables(rows, out)
        files += _report(study, rows, out)
    res = StudyRun(rows, computed, skipped, files, interrupted, timings)
    if not interrupted and study.what == "build" and study.best > 0:
        res.files += export_best(study, rows, out)
    if interrupted:
        raise KeyboardInterrupt
    return res


def _distributed(study: Study, todo: Iterable[Variant], workers: int, scheduler: str | None, timeout: float,
                 keep: Callable[[dict[str, Any]], None]) -> dict[str, float]:
    from dask.distributed import as_completed
    from distributed.scheduler import KilledWorker

    t0 = time.perf_counter()
    client, cluster = _client(workers, scheduler, timeout)
    try:
        # every worker imports once, in parallel, before the first task
        n = len(client.run(warm if cluster is None else local_worker_setup))
        t1 = time.perf_counter()
        futs = [client.submit(evaluate, str(study.base), v.id, v.toml, v.values, key=f"variant-{v.id}", pure=False)
                for v in todo]
        for f in as_completed(futs):
            try:
                row = f.result()
            except KilledWorker as exc:  # the variant took its worker down on every retry: a failed row
                row = {"id": str(f.key).removeprefix("variant-"), "status": "failed", "ok": False,
                       "error_class": type(exc).__name__, "error_message": str(exc)[:2000], "seconds": math.nan,
                       "cpu_seconds": math.nan}
            except Exception:  # noqa: BLE001 - lost with its worker: not a result, the next run retries it
                continue
            keep(row)
        return {"start_s": t1 - t0, "compute_s": time.perf_counter() - t1, "workers": float(n)}
    finally:
        client.close()
        if cluster is not None:
            cluster.close()


def best_rows(rows: list[dict[str, Any]], by: str, k: int, minimize: bool) -> list[dict[str, Any]]:
    """The ``k`` passing rows best by ``metric.<by>``."""
    col = f"metric.{by}"
    good = [r for r in rows if r["status"] == "ok" and r.get("ok") and isinstance(r.get(col), int | float)]
    return sorted(good, key=lambda r: (r[col] if minimize else -r[col], r["id"]))[:k]


def export_best(study: Study, rows: list[dict[str, Any]], out: Path) -> list[Path]:
    """Full exports (``run_build``) of the best ``study.best`` variants into ``out/best/<id>/``."""
    from ..build import run_build
    from ..design import loads_design

    by_id = {v.id: v for v in variants(study)}
    paths: list[Path] = []
    for r in best_rows(rows, study.by, study.best, study.minimize):
        v = by_id.get(r["id"])
        if v is None:
            continue
        s = run_build(loads_design(v.toml, source=study.base), out / "best" / v.id)
        paths += [Path(p) for p in s["outputs"]]
    return paths


def _report(study: Study, rows: list[dict[str, Any]], out: Path) -> list[Path]:
    try:
        from .plots import write_report
    except ImportError:
        return []
    return write_report(study, rows, out)


def default_stream() -> TextIO:
    return sys.stderr
