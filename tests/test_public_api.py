"""The declared public surface of the package, and the command line's basic promises."""
from __future__ import annotations

import subprocess
import sys

import scalewright
from scalewright.cli import COMMANDS, cli, main


def test_public_names_are_declared_and_importable():
    assert sorted(scalewright.__all__) == sorted([
        "__version__", "DataError", "Problem", "ScalewrightError", "SpecError", "UsageError",
        "load_spec", "check_spec", "read_responses", "read_table", "score_scales", "write_scores",
        "analyse_reliability", "analyse_shape", "analyse_compare", "analyse_screen", "build_report"])
    for name in scalewright.__all__:
        assert hasattr(scalewright, name)


def test_version_option(capsys):
    assert main(["--version"]) == 0
    assert scalewright.__version__ in capsys.readouterr().out


def test_every_listed_command_exists():
    for name in COMMANDS:
        assert cli.get_command(None, name) is not None, name


def test_unknown_commands_and_options_are_usage_errors(capsys):
    assert main(["no-such-command"]) == 2
    assert main(["score", "--no-such-option"]) == 2
    err = capsys.readouterr().err
    assert err.count("error: ") == 2
    assert "Traceback" not in err


def test_importing_the_cli_stays_light():
    # heavy libraries are imported where they are needed, so the tool starts fast
    code = ("import sys, scalewright.cli, scalewright.cli.score, scalewright.cli.common; "
            "heavy = [m for m in ('pingouin', 'matplotlib', 'factor_analyzer', 'sklearn', 'statsmodels') if m in sys.modules]; "
            "print(','.join(heavy))")
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert result.stdout.strip() == ""
