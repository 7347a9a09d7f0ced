"""`scalewright demo`: write the fictional staff climate survey and its scale file, and build the full report."""
from __future__ import annotations

from pathlib import Path

import click

from ..files import prepare_output_folder
from ..seeds import DEFAULT_SEED

DATA_NAME = "staff-climate.csv"
SCALES_NAME = "staff-climate.yaml"
SCORES_NAME = "scores.csv"
REPORT_NAME = "index.html"
#: the demo data's column of completion times (seconds), used by the screen's speed check
DURATION_COLUMN = "duration_s"

CAUTION = ("The data are fictional (Kestrel Bay Health does not exist). Scores describe groups of respondents; "
           "they are not a diagnosis or a basis for decisions about one person. For a published instrument, "
           "its own manual and licensed professional practice come first.")


def prepare_folder(folder: str | Path, *, force: bool = False) -> Path:
    """Create ``folder`` if needed; refuse one that already holds files unless ``force``."""
    return prepare_output_folder(folder, what="demo", force=force)


def write_demo_inputs(folder: str | Path, *, seed: int, n: int) -> tuple[Path, Path]:
    """Write the demo data file and scale file into ``folder`` (which must exist); return their paths."""
    from ..demo_data import generate_staff_climate, scale_file_text
    from ..files import write_atomic

    folder = Path(folder)
    frame, _ = generate_staff_climate(seed=seed, n=n)
    data_path = write_atomic(folder / DATA_NAME, frame.to_csv(index=False, lineterminator="\n"))
    scales_path = write_atomic(folder / SCALES_NAME, scale_file_text())
    return data_path, scales_path


def write_demo_scores(folder: str | Path, data_path: Path, scales_path: Path) -> Path:
    """Score the demo data with its scale file and write the scored file into ``folder``."""
    from ..data import read_responses
    from ..scoring import score_scales, write_scores
    from ..spec import load_spec

    spec = load_spec(scales_path)
    table = score_scales(read_responses(data_path, spec), spec)
    return write_scores(table, Path(folder) / SCORES_NAME, inputs=[data_path, scales_path])


@click.command("demo", epilog=("Examples:\n\n\b\n"
                  "  scalewright demo --out demo-report\n"
                  "  scalewright demo --out demo-report --n 1200 --seed 7\n"))
@click.option("--out", "out", required=True, type=click.Path(file_okay=False, path_type=Path),
              help="Folder to write the demo into (created if missing; must be empty unless --force).")
@click.option("--seed", type=click.IntRange(min=0), default=DEFAULT_SEED, show_default=True,
              help="Seed of the generator and of the report's random steps: the same seed gives the same data "
                   "and the same report.")
@click.option("--n", "n", type=click.IntRange(40, 1_000_000), default=600, show_default=True,
              help="Number of respondents.")
@click.option("--force", is_flag=True, help="Write into a folder that already holds files.")
@click.option("--iterations", type=click.IntRange(1, 100_000), default=100, show_default=True,
              help="Random data sets drawn for the report's parallel analysis.")
@click.option("--quiet", "-q", is_flag=True, help="Say nothing on stderr while the report is built.")
def demo(out: Path, seed: int, n: int, force: bool, iterations: int, quiet: bool) -> None:
    """Write a fictional staff climate survey and its scale file, and build the full report from them.
    """
    from .report import report_from_files

    folder = prepare_folder(out, force=force)
    data_path, scales_path = write_demo_inputs(folder, seed=seed, n=n)
    # the report writes the scored file (scores.csv) itself, with every other output
    report_from_files(data_path, scales_path, folder, force=True, seed=seed, iterations=iterations,
                      duration_column=DURATION_COLUMN, quiet=quiet)
    click.echo(f"wrote {data_path}  (data: {n} fictional respondents, seed {seed})")
    click.echo(f"wrote {scales_path}  (scale file)")
    click.echo(f"wrote {folder / SCORES_NAME}  (scored file: one row per respondent, in data order)")
    click.echo(f"wrote {folder / REPORT_NAME}  (the report: open it in a browser; also report.md, results.json, "
               "figures/)")
    import shlex

    from . import program_name

    click.echo(f"next: {program_name()} reliability {shlex.quote(str(data_path))} --scales "
               f"{shlex.quote(str(scales_path))}")
    click.echo(CAUTION)
