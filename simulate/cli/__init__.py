"""The ``swaysim`` command line: one click group, one module per command.

User mistakes print ``swaysim: error: <one line naming the file and key or line>``
and exit with status 2; ``--debug`` shows the traceback. Each command's module is
imported only when that command runs (or ``--help`` lists it), so ``swaysim run``
does not pay for the imports of the spectrum or statistics commands.
"""

from __future__ import annotations

from importlib import import_module

import click

from simulate._version import __version__
from simulate.cli.options import ErrorReportingGroup, debug_option

__all__ = ["main"]

#: command name -> (module, click command object name, one-line help for the listing)
COMMANDS = {
    "run": ("simulate.cli.run", "run_command"),
    "modes": ("simulate.cli.modes", "modes_command"),
    "motions": ("simulate.cli.motions", "motions_command"),
    "spectrum": ("simulate.cli.spectrum", "spectrum_command"),
    "scale": ("simulate.cli.scale", "scale_command"),
    "pushover": ("simulate.cli.pushover", "pushover_command"),
    "compare": ("simulate.cli.compare", "compare_command"),
    "summary": ("simulate.cli.summary", "summary_command"),
    "collect": ("simulate.cli.collect", "collect_command"),
}


class CommandGroup(ErrorReportingGroup):
    """The error-reporting group, loading each command's module on first use."""

    def list_commands(self, ctx):
        return sorted(set(COMMANDS) | set(self.commands))

    def get_command(self, ctx, name):
        if name in self.commands:
            return self.commands[name]
        if name not in COMMANDS:
            return None
        module, attr = COMMANDS[name]
        command = getattr(import_module(module), attr)
        self.add_command(command, name)
        return command


@click.group(cls=CommandGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, "--version", prog_name="swaysim", message="%(prog)s %(version)s")
@debug_option
def main():
    """swaysim: earthquake and harmonic loads through shear-frame building models.

    Results support, and never replace, the judgement of a qualified engineer.
    """
