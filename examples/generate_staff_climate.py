"""Generate the fictional Kestrel Bay Health staff climate survey into a folder.

    python examples/generate_staff_climate.py --out DIR --seed 2026 --n 600

Writes DIR/staff-climate.csv (the data, mess included), DIR/staff-climate.yaml (its scale file) and
DIR/truth.json (what the data were built from: loadings, thresholds, latent correlations, the careless and
part-way respondents, and the population reliability of each scale). The data are fictional.
"""
from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from scalewright.cli.demo import prepare_folder, write_demo_inputs
from scalewright.demo_data import DEFAULT_N, DEFAULT_SEED, generate_staff_climate
from scalewright.errors import ScalewrightError
from scalewright.files import write_atomic


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="Generate the fictional staff climate survey of the demo.")
    parser.add_argument("--out", required=True, type=Path, help="folder to write into (empty or new)")
    parser.add_argument("--seed", type=int, default=DEFAULT_SEED, help="seed of the generator")
    parser.add_argument("--n", type=int, default=DEFAULT_N, help="number of respondents")
    parser.add_argument("--force", action="store_true", help="write into a folder that already holds files")
    args = parser.parse_args(argv)
    try:
        folder = prepare_folder(args.out, force=args.force)
        data_path, scales_path = write_demo_inputs(folder, seed=args.seed, n=args.n)
        _, truth = generate_staff_climate(seed=args.seed, n=args.n)
        truth_path = write_atomic(folder / "truth.json", json.dumps(truth.to_dict(), indent=2) + "\n")
    except ScalewrightError as error:
        print(f"error: {error}", file=sys.stderr)
        return error.exit_code
    for path in (data_path, scales_path, truth_path):
        print(f"wrote {path}")
    print("population reliability of each scale score (model truth):")
    for name, value in truth.population_reliability.items():
        print(f"  {name:<12} {value:.3f}")
    print("The data are fictional. Scores describe groups, not individuals.")
    return 0


if __name__ == "__main__":
    sys.exit(main())
