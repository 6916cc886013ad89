"""Benchmark: the Dask engine on a local cluster against the stream engine, per core and per worker.

Targets, for CSV -> CSV and Parquet -> Parquet (a folder of parts for Dask, one file for the
stream engine): the Dask engine's wall time within 1.3x of the stream engine's on the same
cores (2 worker processes x 1 thread; the stream engine uses the same cores through pyarrow's
threads), and the peak memory of each Dask worker no more than the stream engine's process.
Times are the best of --repeat runs, the engines taking turns (see bench_catalog.best_of);
each peak memory is measured in fresh processes (VmHWM, Linux). The Parquet input has row
groups of 65 536 rows (as redcorr writes them): a row group is the smallest partition.
Without ``distributed`` the local threads scheduler is used, and the memory is not measured.

    python benchmarks/bench_dask.py [--rows 1000000] [--repeat 3] [--partition-rows N]

The catalog is bench_catalog's invented one (15 columns in, 34 out); everything is written to
a temporary folder and removed.
"""

import argparse
import json
import logging
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

import pyarrow.csv as pacsv
import pyarrow.parquet as pq

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from benchmarks.bench_catalog import _make, best_of, make_table  # noqa: E402

ROW_GROUP = 65_536


def _peak_mb():
    """Peak resident memory (MB) of this process image (VmHWM)."""
    with open("/proc/self/status") as fh:
        line = next(x for x in fh if x.startswith("VmHWM"))
    return int(line.split()[1]) / 1024


def run(engine, src, dst, scheduler=None, partition_rows=None):
    """Correct ``src`` into ``dst`` (removed first) with ``engine``; returns the run summary."""
    from redcorr.io.batch import correct_file, correct_file_dask

    dst = Path(dst)
    if dst.is_dir():
        shutil.rmtree(dst)
    elif dst.exists():
        dst.unlink()
    Path(str(dst) + ".summary.json").unlink(missing_ok=True)
    if engine == "stream":
        return correct_file(src, dst, _make)
    return correct_file_dask(str(src), dst, _make, scheduler=scheduler, partition_rows=partition_rows)


def write_inputs(tmp, n):
    """The catalog as CSV and as Parquet, generated 1 M rows at a time."""
    csv_in, pq_in = tmp / "in.csv", tmp / "in.parquet"
    csv_writer = pq_writer = None
    for start in range(0, n, 1_000_000):
        part = make_table(min(1_000_000, n - start), seed=start)
        if csv_writer is None:
            csv_writer = pacsv.CSVWriter(csv_in, part.schema)
            pq_writer = pq.ParquetWriter(pq_in, part.schema)
        csv_writer.write_table(part)
        pq_writer.write_table(part, row_group_size=ROW_GROUP)
    csv_writer.close()
    pq_writer.close()
    return {"csv": (csv_in, tmp / "out.csv", tmp / "out_ds.csv"),
            "parquet": (pq_in, tmp / "out.parquet", tmp / "out_ds")}


def _cluster():
    from distributed import LocalCluster

    return LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None,
                        silence_logs=logging.ERROR)


def stream_peak(src, dst):
    """Peak memory (MB) of a fresh process running the stream engine."""
    code = ("import sys; sys.path.insert(0, %r);"
            "from benchmarks.bench_dask import run, _peak_mb;"
            "run('stream', %r, %r); print(_peak_mb())") % (str(ROOT), str(src), str(dst))
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True, cwd=ROOT)
    return float(out.stdout.strip().splitlines()[-1])


def dask_peaks(src, dst, partition_rows):
    """Peak memory (MB) of each worker of a fresh 2-worker cluster after one Dask run."""
    from distributed import Client

    with _cluster() as cluster, Client(cluster) as client:
        run("dask", src, dst, cluster.scheduler_address, partition_rows)
        return sorted(client.run(_peak_mb).values())


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=1_000_000)
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--partition-rows", type=int, default=None, help="default: the engine's")
    args = parser.parse_args()
    try:
        import distributed  # noqa: F401
    except ImportError:
        distributed = None
        print("distributed is not installed: the Dask engine runs on the local threads scheduler")
    results = {"rows": args.rows}
    with tempfile.TemporaryDirectory(prefix="redcorr-bench-dask-") as folder:
        tmp = Path(folder)
        files = write_inputs(tmp, args.rows)
        cluster = _cluster() if distributed else None
        address = cluster.scheduler_address if cluster else None
        try:
            cases = {}
            for fmt, (src, out_stream, out_dask) in files.items():
                cases[f"stream {fmt}"] = lambda s=src, d=out_stream: run("stream", s, d)
                cases[f"dask {fmt}"] = lambda s=src, d=out_dask: run("dask", s, d, address, args.partition_rows)
            best = best_of(cases, args.repeat)
        finally:
            if cluster is not None:
                cluster.close()
        for fmt in files:
            stream, dask = best[f"stream {fmt}"], best[f"dask {fmt}"]
            ratio = dask / stream
            results[fmt] = {"stream_s": round(stream, 2), "dask_s": round(dask, 2), "ratio": round(ratio, 2),
                            "dask_rows_per_s_per_worker": round(args.rows / dask / 2)}
            print(f"{fmt:8s} -> {fmt:8s} stream {stream:6.2f} s   dask (2 workers x 1 thread) {dask:6.2f} s   "
                  f"ratio {ratio:.2f} (target <= 1.3) {'ok' if ratio <= 1.3 else 'MISSED'}")
        if distributed:
            for fmt, (src, out_stream, out_dask) in files.items():
                stream_mb = stream_peak(src, out_stream)
                workers_mb = dask_peaks(src, out_dask, args.partition_rows)
                results[fmt].update(stream_peak_mb=round(stream_mb), dask_worker_peak_mb=[round(x) for x in workers_mb])
                verdict = "ok" if max(workers_mb) <= stream_mb else "MISSED"
                print(f"{fmt:8s} peak memory: stream process {stream_mb:6.0f} MB   dask workers "
                      f"{', '.join(f'{x:.0f}' for x in workers_mb)} MB (target <= stream) {verdict}")
    print(json.dumps(results))


if __name__ == "__main__":
    main()
