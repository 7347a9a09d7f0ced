"""Benchmark of the streaming and Dask routes: memory flat in rows, time against pyarrow's own parse.

Generates the fictional staff climate survey of ``bench_reliability.py`` (id, shift, 60 items in 10 scales
of 6, answers 1-5, about 1% blanks) in chunks, so even 20,000,000 rows are written with little memory,
as CSV (and, for ``dask``, as a folder of Parquet files), into FOLDER. Each measurement is one child
process; peak memory is its maximum resident set size (``os.wait4`` rusage), time its wall time.

    python tests/benchmarks/bench_engine.py FOLDER memory [--rows 1000000 4000000 20000000]
    python tests/benchmarks/bench_engine.py FOLDER speed [--rows 1000 1000000 4000000] [--repeat 3]
    python tests/benchmarks/bench_engine.py FOLDER dask [--rows 4000000] [--parts 8] [--commands compare confirm]

``memory``: `reliability`, `shape`, `tally --items` and `score --standardize pomp` (writing the scored
CSV), and with ``--commands screen`` `screen --flagged-only` (writing the flagged respondents' CSV, three
passes over the file), with ``--commands score-weighted`` `score --standardize z` with survey weights (two
passes), with ``--engine stream`` on each size (goal: peak
on 4,000,000 rows at most 1.3x the peak on 1,000,000; 20,000,000 rows under 1 GB), and the whole-file
route on the smallest size for comparison. ``speed``: `reliability --engine stream` against a bare
multi-threaded ``pyarrow.csv.read_csv`` of the same file (goal: at most 1.2x), alternated on each size given
(default 1,000,000 rows); with several sizes, each side's median seconds are split into a fixed part and a
part per million rows (a straight line through the sizes). ``dask``: `reliability
--engine dask` (or the commands named: `compare --by shift`, `confirm`, `screen --flagged-only`...) on the
Parquet folder with a local cluster of 1 and of 2 workers, and the same command on the whole CSV file in
memory (the screen also with ``--engine stream``); with ``--client-only`` the command's own peak, given
the address of 2 workers the benchmark starts. Results are printed and
written as JSON beside the data; record them, with ``cat /proc/loadavg``, in docs/performance.md.
"""
from __future__ import annotations

import argparse
import json
import os
import sys
import time
from pathlib import Path

import numpy as np
from bench_common import load, run_child, survey_table
from bench_common import scalewright_command as command
from bench_reliability import ITEMS_PER_SCALE, N_SCALES, REVERSED_ITEMS, SHIFTS, write_scales

CHUNK_ROWS = 500_000


def chunk_table(start: int, rows: int, seed: int):
    """Rows ``start`` .. ``start + rows`` of the survey as an Arrow table (seeded per chunk)."""
    return survey_table(np.random.default_rng([seed, start]), rows, scales=N_SCALES, items=ITEMS_PER_SCALE,
                        reversed_items=REVERSED_ITEMS, groups={"shift": np.array(SHIFTS)}, start=start)


def write_csv(folder: Path, rows: int, seed: int = 2026) -> Path:
    import pyarrow.csv as pacsv

    data = folder / f"climate_{rows}.csv"
    if data.exists():
        return data
    partial = data.with_suffix(".partial")
    with pacsv.CSVWriter(partial, chunk_table(0, 1, seed).schema) as writer:
        for start in range(0, rows, CHUNK_ROWS):
            writer.write_table(chunk_table(start, min(CHUNK_ROWS, rows - start), seed))
    partial.rename(data)
    return data


def write_parquet_folder(folder: Path, rows: int, parts: int, seed: int = 2026) -> Path:
    import pyarrow as pa
    import pyarrow.parquet as pq

    target = folder / f"climate_{rows}_{parts}parts"
    if target.exists():
        return target
    partial = folder / (target.name + ".partial")
    partial.mkdir(exist_ok=True)
    per_part = -(-rows // parts)
    for part in range(parts):
        start, stop = part * per_part, min(rows, (part + 1) * per_part)
        tables = [chunk_table(s, min(CHUNK_ROWS, stop - s), seed) for s in range(start, stop, CHUNK_ROWS)]
        pq.write_table(pa.concat_tables(tables), partial / f"part-{part:03d}.parquet", row_group_size=131072)
    partial.rename(target)
    return target


def measure(label: str, arguments: list[str], results: list[dict], **fields) -> dict:
    run = run_child(arguments)
    sys.stderr.write(run.error if run.code else "")
    record = {"what": label, "seconds": round(run.wall_s, 2), "peak_mb": round(run.peak_mb), "exit": run.code,
              "load": load(), **fields}
    print(json.dumps(record), flush=True)
    results.append(record)
    return record


COMMANDS = {"reliability": [], "shape": [], "tally": ["--items"], "score": ["--standardize", "pomp"],
            "report": ["-q", "--iterations", "20"], "screen": ["--flagged-only"],
            # survey weights: the survey has no weight column, so the answers (1-5) to s0_1, taken out of its
            # scale (weighted_scales), stand in for the weights, its 1% blanks missing weights counted with
            # --lenient; z needs a first pass
            "score-weighted": ["--standardize", "z", "--weight", "s0_1", "--lenient"]}
#: the command a measured name runs, when the name is a variant's own
COMMAND_OF = {"score-weighted": "score"}


def scales_of(name: str, scales: Path) -> Path:
    """The scale file of a measured name: the benchmark's, or for ``score-weighted`` the same without s0_1."""
    if name != "score-weighted":
        return scales
    weighted = scales.with_name("climate_weighted.yaml")
    weighted.write_text(scales.read_text(encoding="utf-8").replace("items: [s0_1, ", "items: ["), encoding="utf-8")
    return weighted
#: measured unless --commands names others (the report, with its figures, takes longest)
DEFAULT_COMMANDS = ["reliability", "shape", "tally", "score"]
#: the commands the dask measurement can also run (with the options they need on this survey)
DASK_COMMANDS = {"reliability": [], "shape": [], "tally": ["--items"], "compare": ["--by", "shift"], "confirm": [],
                 "screen": ["--flagged-only"]}


def output_of(name: str, folder: Path, rows: int, route: str = "stream") -> list[str]:
    """``score`` writes the scored file (a block at a time on the streaming route); the others their JSON."""
    if COMMAND_OF.get(name, name) == "score":
        return ["--out", str(folder / f"{name.replace('score', 'scores')}_{rows}_{route}.csv"), "--force"]
    if name == "screen":  # the flagged respondents' table, written a block at a time on the streaming route
        return ["--out", str(folder / f"screen_{rows}_{route}.csv")]
    if name == "report":
        return ["--out", str(folder / f"report_{rows}_{route}"), "--force"]
    return ["--format", "json", "--out", str(folder / f"{name}_{rows}{'' if route == 'stream' else '_' + route}.json")]


def memory(folder: Path, scales: Path, sizes: list[int], results: list[dict], names: list[str],
           whole: bool = True) -> None:
    for rows in sizes:
        data = write_csv(folder, rows)
        for name, extra in ((name, COMMANDS[name]) for name in names):
            measure(f"{name} stream", command(COMMAND_OF.get(name, name), str(data), "--scales",
                                              str(scales_of(name, scales)),
                                              *output_of(name, folder, rows), "--engine", "stream", *extra),
                    results, rows=rows, file_mb=round(data.stat().st_size / 1e6))
    data = write_csv(folder, min(sizes))
    for name, extra in ((name, COMMANDS[name]) for name in names if whole):
        measure(f"{name} memory", command(COMMAND_OF.get(name, name), str(data), "--scales",
                                          str(scales_of(name, scales)),
                                          *output_of(name, folder, min(sizes), "memory"),
                                          "--engine", "memory", *extra), results, rows=min(sizes))


def speed(folder: Path, scales: Path, sizes: list[int], repeat: int, results: list[dict]) -> dict:
    """Alternate the bare parse and the streamed command on each size, ``repeat`` times; with two sizes or
    more, also split each one's median seconds into a fixed part and a part per million rows (least
    squares on the sizes), so the ratio at one size can be read as start-up cost against per-row cost."""
    from statistics import median

    files = {rows: write_csv(folder, rows) for rows in sizes}
    seconds: dict[int, dict[str, list[float]]] = {rows: {"parse": [], "command": []} for rows in sizes}
    for _ in range(repeat):
        for rows, data in files.items():
            parse = [sys.executable, "-c", f"import pyarrow.csv as c; c.read_csv({str(data)!r})"]
            bare = measure("pyarrow.csv.read_csv", parse, results, rows=rows)
            streamed = measure("reliability stream", command("reliability", str(data), "--scales", str(scales),
                                                             "--format", "json", "--out", str(folder / "speed.json"),
                                                             "--engine", "stream"), results, rows=rows)
            seconds[rows]["parse"].append(bare["seconds"])
            seconds[rows]["command"].append(streamed["seconds"])
            print(f"{rows} rows: ratio {streamed['seconds'] / bare['seconds']:.2f}", flush=True)
    summary: dict = {"sizes": {}}
    for rows, runs in seconds.items():
        parse, streamed = runs["parse"], runs["command"]
        summary["sizes"][rows] = {
            "runs": len(parse), "median_parse_s": median(parse), "median_command_s": median(streamed),
            "median_of_ratios": round(median(c / b for b, c in zip(parse, streamed, strict=True)), 3),
            "ratio_of_medians": round(median(streamed) / median(parse), 3)}
        print(f"{rows} rows, {len(parse)} pairs: parse {median(parse):.2f} s, command {median(streamed):.2f} s, "
              f"median of ratios {summary['sizes'][rows]['median_of_ratios']:.2f}, "
              f"ratio of medians {summary['sizes'][rows]['ratio_of_medians']:.2f}", flush=True)
    if len(sizes) >= 2:
        millions = np.array(sizes, dtype=float) / 1e6
        for what in ("parse", "command"):
            per_million, fixed = np.polyfit(millions, [median(seconds[rows][what]) for rows in sizes], 1)
            summary[what] = {"fixed_s": round(float(fixed), 3), "per_million_rows_s": round(float(per_million), 3)}
            print(f"{what}: {fixed:.2f} s fixed + {per_million:.2f} s per million rows", flush=True)
    return summary


def dask(folder: Path, scales: Path, rows: int, parts: int, results: list[dict],
         names: tuple[str, ...] = ("reliability",), client_only: bool = False) -> None:
    dataset = write_parquet_folder(folder, rows, parts)
    if client_only:
        client_alone(folder, scales, dataset, rows, parts, results, names)
        return
    for name in names:
        extra = DASK_COMMANDS[name]
        for workers in (1, 2):
            written = (["--out", str(folder / f"dask_screen_{rows}_{workers}.csv")] if name == "screen" else
                       ["--format", "json", "--out", str(folder / f"dask_{name}_{workers}.json")])
            measure(f"{name} dask {workers} worker(s)",
                    command(name, str(dataset), "--scales", str(scales), *written, "--engine", "dask",
                            "--workers", str(workers), *extra),
                    results, rows=rows, parts=parts, workers=workers)
        if name != "reliability":  # the same numbers from the whole file in memory, for scale
            data = write_csv(folder, rows)
            routes = ("memory", "stream") if name == "screen" else ("memory",)
            for route in routes:
                written = (["--out", str(folder / f"screen_{rows}_{route}.csv")] if name == "screen" else
                           ["--format", "json", "--out", str(folder / f"{route}_{name}.json")])
                measure(f"{name} {route}", command(name, str(data), "--scales", str(scales), *written,
                                                   "--engine", route, *extra), results, rows=rows)


def client_alone(folder: Path, scales: Path, dataset: Path, rows: int, parts: int, results: list[dict],
                 names: tuple[str, ...]) -> None:
    """The command's own peak without its workers': a local cluster of 2 worker processes started here, the
    command given its address (the screen once with ``--flagged-only``, once writing every record)."""
    from dask.distributed import LocalCluster

    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=":0") as cluster:
        for name in names:
            variants = ([["--flagged-only"], []] if name == "screen" else [DASK_COMMANDS[name]])
            for extra in variants:
                written = (["--out", str(folder / f"client_{name}_{rows}.csv")] if name == "screen" else
                           ["--format", "json", "--out", str(folder / f"client_{name}_{rows}.json")])
                measure(f"{name} dask client {' '.join(extra)}", command(
                            name, str(dataset), "--scales", str(scales), *written, "--engine", "dask",
                            "--scheduler", cluster.scheduler_address, *extra),
                        results, rows=rows, parts=parts, workers=2)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("folder", type=Path)
    parser.add_argument("what", choices=["memory", "speed", "dask", "generate"])
    parser.add_argument("--rows", type=int, nargs="+", default=None)
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--parts", type=int, default=8)
    parser.add_argument("--commands", nargs="+", default=None, choices=sorted({*COMMANDS, *DASK_COMMANDS}),
                        help="memory: of reliability, shape, tally, score, report, screen, score-weighted (default the "
                             "first four); "
                             "dask: any of reliability, shape, tally, compare, confirm, screen (default reliability)")
    parser.add_argument("--no-whole", action="store_true", help="memory: skip the whole-file route")
    parser.add_argument("--client-only", action="store_true",
                        help="dask: the command's own peak, its 2 workers started by the benchmark")
    options = parser.parse_args()
    options.folder.mkdir(parents=True, exist_ok=True)
    scales = write_scales(options.folder)
    results: list[dict] = []
    summary: dict = {}
    if options.what == "generate":
        for rows in options.rows or [1_000_000, 4_000_000, 20_000_000]:
            start = time.perf_counter()
            data = write_csv(options.folder, rows)
            print(f"{data}: {data.stat().st_size / 1e6:.0f} MB in {time.perf_counter() - start:.0f} s", flush=True)
    elif options.what == "memory":
        memory(options.folder, scales, options.rows or [1_000_000, 4_000_000, 20_000_000], results,
               [name for name in options.commands or DEFAULT_COMMANDS if name in COMMANDS], whole=not options.no_whole)
    elif options.what == "speed":
        summary = speed(options.folder, scales, options.rows or [1_000_000], options.repeat, results)
    else:
        dask(options.folder, scales, (options.rows or [4_000_000])[0], options.parts, results,
             tuple(options.commands or ("reliability",)), client_only=options.client_only)
    if results:
        out = options.folder / f"bench_engine_{options.what}.json"
        out.write_text(json.dumps({"cpu_count": os.cpu_count(), "results": results, **({"summary": summary} if summary else {})},
                                  indent=2), encoding="utf-8")
    return 0 if all(r["exit"] == 0 for r in results) else 1


if __name__ == "__main__":
    sys.exit(main())
