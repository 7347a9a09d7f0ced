"""Where the streamed `reliability` spends its CPU: the stages of the block route timed one after the other.

Every block of the benchmark survey (``bench_engine.py``'s CSV, generated into FOLDER when absent) is
parsed first and held, then converted to one-byte codes, summarised and merged, each stage in turn on one
thread, so the CPU seconds of each stage are its own (in the command the stages overlap on a pool of
threads). ``--profile`` adds cProfile's table of the conversion and summaries.

    python tests/benchmarks/bench_stream_stages.py FOLDER [--rows 1000000] [--profile]

Record the figures, with ``cat /proc/loadavg``, in docs/performance.md.
"""
from __future__ import annotations

import argparse
import resource
import sys
import time
from pathlib import Path

from bench_common import load
from bench_engine import write_csv
from bench_reliability import write_scales


def cpu_seconds() -> float:
    usage = resource.getrusage(resource.RUSAGE_SELF)
    return usage.ru_utime + usage.ru_stime


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("folder", type=Path)
    parser.add_argument("--rows", type=int, default=1_000_000)
    parser.add_argument("--profile", action="store_true")
    options = parser.parse_args()
    options.folder.mkdir(parents=True, exist_ok=True)

    from scalewright.concurrency import one_blas_thread
    from scalewright.data_file import first_row_number
    from scalewright.engine.blocks import batch_sources, convert_batch
    from scalewright.engine.plan import plan_for, summarise_block
    from scalewright.engine.stream import _TreeMerge
    from scalewright.spec import load_spec

    data = write_csv(options.folder, options.rows)
    spec = load_spec(write_scales(options.folder))
    plan = plan_for(spec, cross_products="listwise", patterns=True)  # as `reliability` plans it
    print(f"load {load()}", flush=True)
    start, wall = cpu_seconds(), time.perf_counter()
    batches = list(batch_sources(data, spec, plan.columns)[0]())
    print(f"parse: {cpu_seconds() - start:.2f} s CPU, {time.perf_counter() - wall:.2f} s wall, {len(batches)} blocks")
    profile = None
    if options.profile:
        import cProfile

        profile = cProfile.Profile()
    with one_blas_thread():
        start, row, blocks = cpu_seconds(), first_row_number(data), []
        if profile:
            profile.enable()
        for batch in batches:
            blocks.append(convert_batch(batch, spec, plan.columns, first_row=row))
            row += batch.num_rows
        print(f"conversion to codes: {cpu_seconds() - start:.2f} s CPU")
        start = cpu_seconds()
        summaries = [summarise_block(block, plan) for block in blocks]
        print(f"summaries: {cpu_seconds() - start:.2f} s CPU")
        if profile:
            profile.disable()
        start, merged = cpu_seconds(), _TreeMerge()
        for summary in summaries:
            merged.add(summary)
        merged.result()
        print(f"merging: {cpu_seconds() - start:.2f} s CPU")
    if profile:
        import pstats

        pstats.Stats(profile).sort_stats("tottime").print_stats(25)
    print(f"load {load()}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
