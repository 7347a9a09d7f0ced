"""The command line: parse, call the library, render. Errors become one ``error:`` line and an exit code."""
from __future__ import annotations

import importlib
import os
import sys

import click

from .. import __version__
from ..errors import ScalewrightError, one_line

#: command name -> module of this package that defines a click command of the same name
COMMANDS = {
    "demo": "demo",
    "draft": "draft",
    "lint": "lint",
    "score": "score",
    "reliability": "reliability",
    "structure": "structure",
    "shape": "shape",
    "compare": "compare",
    "tally": "tally",
    "screen": "screen",
    "confirm": "confirm",
    "report": "report",
}


class LazyGroup(click.Group):
    """Imports a command's module only when that command runs, so the tool starts fast."""

    def list_commands(self, ctx: click.Context) -> list[str]:
        return list(COMMANDS)

    def get_command(self, ctx: click.Context, cmd_name: str) -> click.Command | None:
        module_name = COMMANDS.get(cmd_name)
        if module_name is None:
            return None
        module = importlib.import_module(f"{__name__}.{module_name}")
        return getattr(module, cmd_name.replace("-", "_"))

    def resolve_command(self, ctx: click.Context, args: list[str]) -> tuple[str | None, click.Command | None, list[str]]:
        name = args[0] if args else ""
        if name and not name.startswith("-") and name not in COMMANDS:
            import difflib

            close = difflib.get_close_matches(name, list(COMMANDS), n=1, cutoff=0.6)
            hint = f"; did you mean {close[0]!r}?" if close else f"; the commands are {', '.join(COMMANDS)}"
            raise click.UsageError(f"no command {name!r}{hint}", ctx)
        return super().resolve_command(ctx, args)


@click.group(cls=LazyGroup, context_settings={"help_option_names": ["-h", "--help"], "max_content_width": 100})
@click.version_option(__version__, prog_name="scalewright")
def cli() -> None:
    """Score, check and describe multi-item rating scales.

    Every command reads one data file and one scale file (YAML). Start with
    `scalewright demo --out DIR` to see a full report on fictional data.

    Scores describe groups of respondents; they are not a diagnosis or a basis
    for decisions about one person.
    """


def program_name() -> str:
    """The program as the user invoked it, for lines the user may copy and run as printed.

    ``scalewright`` (or the path typed, e.g. ``.venv/bin/scalewright``) for the console script;
    ``python -m scalewright`` when started that way, with the interpreter's full path unless the same one is
    first on PATH.
    """
    import shlex
    import shutil

    launched = sys.argv[0] if sys.argv and sys.argv[0] else ""
    if os.path.splitext(os.path.basename(launched))[0] != "scalewright":  # python -m, or called from Python
        python = sys.executable or "python"
        short = os.path.basename(python)
        if shutil.which(short) and os.path.realpath(shutil.which(short) or "") == os.path.realpath(python):
            python = short
        return f"{shlex.quote(python)} -m scalewright"
    return shlex.quote(launched) if os.sep in launched else os.path.basename(launched)


def main(argv: list[str] | None = None) -> int:
    """Entry point of the console script; never lets a traceback reach the user."""
    try:
        returned = cli.main(args=argv, prog_name="scalewright", standalone_mode=False)
    except ScalewrightError as error:
        from .common import error_line

        click.echo(f"error: {error_line(error)}", err=True)
        return error.exit_code
    except click.exceptions.Abort:
        click.echo("error: interrupted", err=True)
        return 130
    except click.ClickException as error:
        click.echo(f"error: {one_line(error.format_message())}", err=True)
        return 2
    except click.exceptions.Exit as done:
        return done.exit_code
    except KeyboardInterrupt:
        click.echo("error: interrupted", err=True)
        return 130
    except BrokenPipeError:
        return 0
    except MemoryError:
        click.echo("error: out of memory; try a smaller file or fewer scales", err=True)
        return 1
    except OSError as error:
        click.echo(one_line(f"error: {error.strerror or error}: {error.filename or ''}".rstrip(": ")), err=True)
        return 1
    except Exception as error:  # the last line of defence: a bug must not show a user a traceback
        if os.environ.get("SCALEWRIGHT_DEBUG"):
            raise
        click.echo(one_line(f"error: internal error ({type(error).__name__}: {str(error)[:200]}); please report it "
                            "with the command you ran (set SCALEWRIGHT_DEBUG=1 to see the details)"), err=True)
        return 70
    # without standalone mode click hands back the code of ctx.exit(); a finished command returns None
    return returned if isinstance(returned, int) else 0


def run() -> None:  # pragma: no cover - console script shim
    leave(main())


def leave(code: int) -> None:
    """End the process with ``code``, skipping the interpreter's teardown when nothing is left to finish.

    Unloading numpy, scipy and pyarrow at exit costs 0.05 - 0.1 s, a twentieth of a streamed
    `reliability` of a million rows. By the time a command returns, every file it wrote is closed and
    every temporary folder removed (all by context managers), so the process may end at once once the
    standard streams are flushed; while a thread or child process is still running, or a stream cannot
    be flushed, the usual exit runs instead.
    """
    import threading

    children = sys.modules.get("multiprocessing")
    if threading.active_count() > 1 or (children is not None and children.active_children()):
        sys.exit(code)
    try:
        sys.stdout.flush()
        sys.stderr.flush()
    except (OSError, ValueError):
        sys.exit(code)
    os._exit(code)
