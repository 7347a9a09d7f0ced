"""Everyday commands as multiples of the interpreter's own start-up (issue: seconds, not half a minute).

Each case runs its command in a child process several times; beside each run, in the same loop, a child
runs ``python -c "import pandas, scipy.stats, matplotlib"`` (the start-up every command pays at least).
The table gives the median seconds of both, the median of the paired ratios and the goal, the same ratio in
CPU seconds, and the load average when the case started (``/proc/loadavg``: figures taken on a busy machine
are not comparable).

    python tests/benchmarks/bench_everyday.py [--repeat 3] [--folder DIR] [--cases a,b,...] [--json FILE]

Cases (goals from the issue, as ratios to the start-up):

==============  ====  =====================================================================================
case            goal  command
==============  ====  =====================================================================================
rel60           1.5   ``reliability`` with ``--by shift --by site`` on the 60-row demo data
rel60-busy      1.5   the same while a second CPU-bound process runs
demo            4     ``report`` on the demo (600 respondents, 18 items, 4 subgroup columns)
inventory       4     ``report`` on 2,800 x 25 items, 5 scales, 2 subgroup columns
large           10    ``report`` on 100,000 x 60 items (10 scales)
tally           3     ``tally --items`` on 1,000,000 x 60 items
==============  ====  =====================================================================================

The inputs are generated once into ``--folder`` (default: a folder in the system's temporary directory,
reused by later runs; the 1,000,000-row file is about 140 MB) from fixed seeds.
"""
from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from bench_common import load, run_child, scale_file_text, survey_table

REPO = Path(__file__).resolve().parents[2]
STARTUP = [sys.executable, "-c", "import pandas, scipy.stats, matplotlib"]
BUSY = [sys.executable, "-c", "while True: pass"]


@dataclass(frozen=True)
class Case:
    name: str
    goal: float
    what: str
    busy: bool = False


CASES = (
    Case("rel60", 1.5, "reliability --by shift --by site, 60 rows"),
    Case("rel60-busy", 1.5, "the same, a second CPU-bound process running", busy=True),
    Case("demo", 4.0, "report, demo: 600 x 18 items, 4 subgroup columns"),
    Case("inventory", 4.0, "report, 2,800 x 25 items, 5 scales, 2 subgroup columns"),
    Case("large", 10.0, "report, 100,000 x 60 items, 10 scales"),
    Case("tally", 3.0, "tally --items, 1,000,000 x 60 items"),
)


def write_survey(folder: Path, name: str, *, rows: int, scales: int, items: int, groups: dict[str, int],
                 seed: int) -> tuple[Path, Path]:
    """A fictional staff climate survey: ``scales`` x ``items`` congeneric 1-5 items, two reverse-keyed per
    scale, about 1% blanks, and subgroup columns with the given numbers of levels. Reused if present."""
    import pyarrow.csv as pacsv

    data, scale_file = folder / f"{name}.csv", folder / f"{name}.yaml"
    reversed_items = (2, items)
    scale_file.write_text(scale_file_text(f"Staff climate survey ({name}, benchmark)", scales=scales, items=items,
                                          reversed_items=reversed_items, groups=list(groups)), encoding="utf-8")
    if not data.exists():
        levels = {column: np.array([f"{column}-{i + 1}" for i in range(count)]) for column, count in groups.items()}
        table = survey_table(np.random.default_rng(seed), rows, scales=scales, items=items,
                             reversed_items=reversed_items, groups=levels)
        pacsv.write_csv(table, data)
    return data, scale_file


def prepare(folder: Path, names: set[str]) -> dict[str, list[str]]:
    """Write the inputs the chosen cases need; return each case's command-line arguments."""
    sys.path.insert(0, str(REPO / "src"))
    from scalewright.cli.demo import write_demo_inputs

    commands: dict[str, list[str]] = {}
    out = folder / "out"
    if names & {"rel60", "rel60-busy"}:
        (folder / "demo60").mkdir(exist_ok=True)
        data, scales = write_demo_inputs(folder / "demo60", seed=2026, n=60)
        commands["rel60"] = commands["rel60-busy"] = ["reliability", str(data), "--scales", str(scales),
                                                      "--by", "shift", "--by", "site", "--format", "json",
                                                      "--out", str(out / "rel60.json")]
    if "demo" in names:
        (folder / "demo600").mkdir(exist_ok=True)
        data, scales = write_demo_inputs(folder / "demo600", seed=2026, n=600)
        commands["demo"] = ["report", str(data), "--scales", str(scales), "--out", str(out / "demo"), "--force", "-q"]
    if "inventory" in names:
        data, scales = write_survey(folder, "inventory", rows=2800, scales=5, items=5,
                                    groups={"shift": 3, "site": 6}, seed=28)
        commands["inventory"] = ["report", str(data), "--scales", str(scales), "--out", str(out / "inventory"),
                                 "--force", "-q"]
    if "large" in names:
        data, scales = write_survey(folder, "large", rows=100_000, scales=10, items=6, groups={}, seed=100)
        commands["large"] = ["report", str(data), "--scales", str(scales), "--out", str(out / "large"), "--force",
                             "-q"]
    if "tally" in names:
        data, scales = write_survey(folder, "million", rows=1_000_000, scales=10, items=6, groups={}, seed=1000)
        commands["tally"] = ["tally", str(data), "--scales", str(scales), "--items", "--format", "json",
                             "--out", str(out / "tally.json")]
    out.mkdir(exist_ok=True)
    return commands


def timed(arguments: list[str], env: dict[str, str]) -> tuple[float, float]:
    """Wall seconds and CPU seconds (user + system, the child and the processes it waited for)."""
    run = run_child(arguments, env)
    if run.code:
        raise SystemExit(f"command failed ({run.code}): {' '.join(arguments)}\n{run.error}")
    return run.wall_s, run.cpu_s


def child_environment(folder: Path) -> dict[str, str]:
    """The children's environment: this tree's source first, with byte code as an installed package has it.

    Without byte code (``PYTHONDONTWRITEBYTECODE`` set, as in some development shells) every run compiles
    the package's ~150 modules again (about 0.15 s); the byte code is written under ``folder`` (not into the
    source tree) by compiling the package once before the timed runs.
    """
    env = {key: value for key, value in os.environ.items() if key != "PYTHONDONTWRITEBYTECODE"}
    env["PYTHONPATH"] = os.pathsep.join(filter(None, [str(REPO / "src"), os.environ.get("PYTHONPATH")]))
    env["PYTHONPYCACHEPREFIX"] = str(folder / "pycache")
    subprocess.run([sys.executable, "-m", "compileall", "-q", str(REPO / "src" / "scalewright")], env=env,
                   check=True, stdout=subprocess.DEVNULL)
    return env


def run_case(case: Case, arguments: list[str], repeat: int, env: dict[str, str]) -> dict:
    command = [sys.executable, "-m", "scalewright", *arguments]
    busy = subprocess.Popen(BUSY) if case.busy else None
    try:
        load_at_start = load()
        startups, commands, startup_cpu, command_cpu = [], [], [], []
        for _ in range(repeat):
            wall, cpu = timed(STARTUP, env)
            startups.append(wall)
            startup_cpu.append(cpu)
            wall, cpu = timed(command, env)
            commands.append(wall)
            command_cpu.append(cpu)
    finally:
        if busy is not None:
            busy.kill()
            busy.wait()
    ratios = [c / s for c, s in zip(commands, startups, strict=True)]
    return {"case": case.name, "what": case.what, "goal": case.goal, "busy": case.busy, "load": load_at_start,
            "load_after": load(), "startup_s": startups, "command_s": commands, "ratios": ratios,
            "median_startup_s": statistics.median(startups), "median_command_s": statistics.median(commands),
            "median_ratio": statistics.median(ratios), "met": statistics.median(ratios) <= case.goal,
            "startup_cpu_s": startup_cpu, "command_cpu_s": command_cpu,
            "median_cpu_ratio": statistics.median(c / s for c, s in zip(command_cpu, startup_cpu, strict=True))}


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--folder", type=Path, default=Path(tempfile.gettempdir()) / "scalewright-bench-everyday")
    parser.add_argument("--cases", default=",".join(c.name for c in CASES))
    parser.add_argument("--json", type=Path, default=None, help="also write the figures to this JSON file")
    options = parser.parse_args()
    chosen = [c for c in CASES if c.name in set(options.cases.split(","))]
    options.folder.mkdir(parents=True, exist_ok=True)
    started = time.perf_counter()
    commands = prepare(options.folder, {c.name for c in chosen})
    env = child_environment(options.folder)
    print(f"inputs in {options.folder} (ready in {time.perf_counter() - started:.1f} s); "
          f"{options.repeat} run(s) per case, cores: {os.cpu_count()}")
    results = []
    header = (f"{'case':<11} {'goal':>5} {'start-up s':>10} {'command s':>10} {'ratio':>6} {'met':>4} "
              f"{'cpu ratio':>9}  {'load (1/5/15 min)':<17}  what")
    print(header)
    print("-" * len(header))
    for case in chosen:
        row = run_case(case, commands[case.name], options.repeat, env)
        results.append(row)
        print(f"{case.name:<11} {case.goal:>5.1f} {row['median_startup_s']:>10.2f} {row['median_command_s']:>10.2f} "
              f"{row['median_ratio']:>6.2f} {'yes' if row['met'] else 'NO':>4} {row['median_cpu_ratio']:>9.2f}  "
              f"{row['load']:<17}  {case.what}",
              flush=True)
    print("medians of the runs; ratio = median of the paired ratios (command / start-up of the same run), wall "
          "clock; cpu ratio = the same with CPU seconds (user + system, worker processes included): on a busy "
          "machine a rough guide to the quiet ratio, above it when the command spreads its work over cores")
    if options.json:
        options.json.write_text(json.dumps({"repeat": options.repeat, "cpu_count": os.cpu_count(),
                                            "cases": results}, indent=2), encoding="utf-8")
    return 0


if __name__ == "__main__":
    sys.exit(main())
