"""Run a study: evaluate variants in-process, on a local Dask cluster or on a given scheduler.

One code path for the pool and the cluster: ``workers > 1`` starts a loopback
``dask.distributed.LocalCluster`` (processes, one thread each); ``scheduler="tcp://HOST:PORT"``
connects to an existing one. Rows stream to ``results.jsonl`` (one line per finished variant,
flushed); ``results.csv`` and ``results.parquet`` are rewritten atomically from it after every
batch and at the end, so an interrupted study leaves consistent tables and a rerun skips the ids
already there.
"""

from __future__ import annotations

import json
import math
import os
import sys
import time
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from pathlib import Path
from typing import Any, TextIO

from .spec import Study, StudyError, Variant, variants

__all__ = ["evaluate", "flatten_metrics", "run_study", "read_rows", "write_tables", "StudyRun"]

CONNECT_TIMEOUT_S = 10.0


def flatten_metrics(metrics: dict[str, Any], prefix: str = "") -> dict[str, float]:
    """Every numeric figure of a check summary's ``metrics``: nested keys joined by ``.``,
    list items by ``_0``, ``_1`` ...; booleans as 0/1; text is left out."""
    out: dict[str, float] = {}
    for k, v in metrics.items():
        name = f"{prefix}{k}"
        if isinstance(v, bool):
            out[name] = float(v)
        elif isinstance(v, int | float):
            out[name] = float(v)
        elif isinstance(v, dict):
            out.update(flatten_metrics(v, name + "."))
        elif isinstance(v, list | tuple) and all(isinstance(x, int | float) and not isinstance(x, bool) for x in v):
            out.update({f"{name}_{i}": float(x) for i, x in enumerate(v)})
    return out


def evaluate(base: str, vid: str, toml_text: str, values: dict[str, Any]) -> dict[str, Any]:
    """Check one variant with :func:`thickpanel.build.run_check`; never raises for a bad variant."""
    import cadquery  # noqa: F401 - imported once per worker process, reused by every variant

    from ..build import run_check
    from ..design import loads_design

    t0 = time.perf_counter()
    row: dict[str, Any] = {"id": vid, **{f"axis.{k}": v for k, v in values.items()}}
    try:
        s = run_check(loads_design(toml_text, source=Path(base)))
        row.update(status="ok", ok=bool(s["ok"]), error_class="", error_message="")
        row.update({f"metric.{k}": v for k, v in flatten_metrics(s["metrics"]).items()})
    except Exception as exc:  # noqa: BLE001 - a failing variant is a row, the study goes on
        row.update(status="failed", ok=False, error_class=type(exc).__name__, error_message=str(exc)[:2000])
    row["seconds"] = round(time.perf_counter() - t0, 4)
    return row


def read_rows(path: Path) -> list[dict[str, Any]]:
    """Rows of a ``results.jsonl``; a last line cut short by an interruption is dropped."""
    rows = []
    if path.exists():
        for line in path.read_text(encoding="utf-8").splitlines():
            try:
                rows.append(json.loads(line))
            except json.JSONDecodeError:
                continue
    return rows


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
    table = pa.table({c: [_cell(r.get(c)) for r in rows] for c in cols}) if rows else pa.table({})
    tmp = pq_path.with_suffix(".parquet.tmp")
    pq.write_table(table, tmp)
    tmp.replace(pq_path)
    paths.append(pq_path)
    return paths


def _cell(v: Any) -> Any:
    return str(v) if isinstance(v, list | dict) else v


@dataclass
class StudyRun:
    """What :func:`run_study` did: all rows, the ids computed in this run, the output files."""

    rows: list[dict[str, Any]]
    computed: list[str]
    skipped: int
    files: list[Path]
    interrupted: bool = False

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


def _client(workers: int, scheduler: str | None, timeout: float) -> tuple[Any, Any]:
    from dask.distributed import Client, LocalCluster

    if scheduler:
        try:
            return Client(scheduler, timeout=timeout), None
        except (OSError, TimeoutError) as exc:
            raise StudyError(f"--scheduler {scheduler}: cannot reach the Dask scheduler within {timeout:g} s "
                             f"({type(exc).__name__}: {exc})") from None
    cluster = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True, host="127.0.0.1",
                           dashboard_address=None)
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
    """
    out = Path(out or study.output)
    out.mkdir(parents=True, exist_ok=True)
    jsonl = out / "results.jsonl"
    rows = read_rows(jsonl)
    done = {r["id"] for r in rows}
    todo = [v for v in variants(study) if v.id not in done]
    skipped = len(done)
    if limit is not None:
        todo = todo[:max(0, limit)]
    workers = workers or os.cpu_count() or 1
    prog = _Progress(len(todo), progress)
    computed: list[str] = []
    interrupted = False
    with open(jsonl, "a", encoding="utf-8") as fh:
        def keep(row: dict[str, Any]) -> None:
            fh.write(json.dumps(row, default=str, allow_nan=True) + "\n")
            fh.flush()
            rows.append(row)
            computed.append(row["id"])
            prog(row)
            if on_row:
                on_row(row)

        try:
            if scheduler is None and workers <= 1:
                for v in todo:
                    keep(evaluate(str(study.base), v.id, v.toml, v.values))
            elif todo:
                _distributed(study, todo, workers, scheduler, connect_timeout, keep)
        except KeyboardInterrupt:
            interrupted = True
    files = write_tables(rows, out)
    files += _report(study, rows, out)
    res = StudyRun(rows, computed, skipped, files, interrupted)
    if not interrupted and study.what == "build" and study.best > 0:
        res.files += export_best(study, rows, out)
    if interrupted:
        raise KeyboardInterrupt
    return res


def _distributed(study: Study, todo: Iterable[Variant], workers: int, scheduler: str | None, timeout: float,
                 keep: Callable[[dict[str, Any]], None]) -> None:
    from dask.distributed import as_completed

    client, cluster = _client(workers, scheduler, timeout)
    try:
        futs = [client.submit(evaluate, str(study.base), v.id, v.toml, v.values, key=f"variant-{v.id}", pure=False)
                for v in todo]
        for f in as_completed(futs):
            try:
                keep(f.result())
            except Exception as exc:  # noqa: BLE001 - a lost worker: record, go on
                vid = str(f.key).removeprefix("variant-")
                keep({"id": vid, "status": "failed", "ok": False, "error_class": type(exc).__name__,
                      "error_message": str(exc)[:2000], "seconds": math.nan})
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
