"""Options and arguments shared by the ``swaysim`` commands, and the error policy.

Mistakes a user can make (``simulate.errors.InputError``) print one line
``swaysim: error: <message>`` on stderr and exit with status 2; anything else is
an internal error (one line, status 1). ``--debug`` adds the traceback.
"""

from __future__ import annotations

import io
import os
import sys
import traceback
from pathlib import Path

import click

from simulate.errors import InputError

#: Key in ``click.Context.meta`` (shared by a group and its commands) that holds the debug flag.
DEBUG_KEY = "swaysim.debug"

#: Exit status for user mistakes (the same as click's usage errors) and for internal errors.
EXIT_USER_ERROR = 2
EXIT_INTERNAL_ERROR = 1


def _set_debug(ctx: click.Context, param, value):
    if value:
        ctx.meta[DEBUG_KEY] = True
    return value


#: ``--debug``: accepted before or after the command name.
debug_option = click.option(
    "--debug", is_flag=True, expose_value=False, is_eager=True, callback=_set_debug,
    help="Show the full traceback when something goes wrong.",
)

#: The CONFIG argument: a TOML config file (existence and content are checked by load_config,
#: which names the file in a one-line message).
config_argument = click.argument("config", metavar="CONFIG", type=click.Path(path_type=Path))


def _one_line(text: str) -> str:
    return "; ".join(part.strip() for part in str(text).splitlines() if part.strip())


def report_error(ctx: click.Context, exc: BaseException) -> None:
    """Print ``exc`` as one line on stderr (traceback first with --debug) and exit."""
    debug = bool(ctx.meta.get(DEBUG_KEY))
    if debug:
        click.echo("".join(traceback.format_exception(exc)).rstrip(), err=True)
    if isinstance(exc, InputError):
        click.echo(f"swaysim: error: {_one_line(exc)}", err=True)
        ctx.exit(EXIT_USER_ERROR)
    hint = "" if debug else " (run with --debug for the traceback)"
    message = _one_line(exc) or "no message"
    click.echo(f"swaysim: internal error: {type(exc).__name__}: {message}{hint}", err=True)
    ctx.exit(EXIT_INTERNAL_ERROR)


class ErrorReportingGroup(click.Group):
    """A click group that turns exceptions from its commands into one-line messages."""

    def invoke(self, ctx: click.Context):
        try:
            return super().invoke(ctx)
        except (click.exceptions.ClickException, click.exceptions.Exit, click.exceptions.Abort):
            raise
        except BrokenPipeError:
            # The reader went away (``swaysim run ... | head``): stop quietly, as other
            # command-line tools do, and keep Python from complaining at exit.
            _silence_stdout()
            ctx.exit(EXIT_INTERNAL_ERROR)
        except Exception as exc:  # noqa: BLE001 - the error policy of the whole command line
            report_error(ctx, exc)


def _silence_stdout() -> None:
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError, AttributeError, io.UnsupportedOperation):
        pass


def check_output_file(path, suffixes=(), what: str = "output", origin: str = "option -o") -> None:
    """Fail before any work, not after it, when a file cannot be written to ``path``.

    One line (InputError) for a suffix not in ``suffixes`` (when given), a path that
    is a folder, or a folder that does not exist; ``origin`` says where the path came from.
    """
    path = Path(path)
    ending = " or ".join(suffixes)
    if suffixes and path.suffix.lower() not in suffixes:
        raise InputError(f"{origin}: {path}: unknown {what} format {path.suffix or '(none)'!r}; "
                         f"use a file name ending in {ending}")
    if path.is_dir():
        raise InputError(f"{origin}: {path} is a folder; give a file name" + (f" ending in {ending}" if ending else ""))
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(f"{origin}: {path}: folder {folder} does not exist")


def positive_float(ctx, param, value):
    """Callback: a finite number > 0 (or None)."""
    if value is None:
        return None
    if not (value > 0.0 and value != float("inf")):
        raise click.BadParameter(f"expected a positive number of seconds, got {value!r}")
    return value
