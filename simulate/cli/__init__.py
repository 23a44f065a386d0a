"""The ``swaysim`` command line: one click group, one module per command.

User mistakes print ``swaysim: error: <one line naming the file and key or line>``
and exit with status 2; ``--debug`` shows the traceback.
"""

from __future__ import annotations

import click

from simulate._version import __version__
from simulate.cli.collect import collect_command
from simulate.cli.compare import compare_command
from simulate.cli.modes import modes_command
from simulate.cli.motions import motions_command
from simulate.cli.options import ErrorReportingGroup, debug_option
from simulate.cli.pushover import pushover_command
from simulate.cli.run import run_command
from simulate.cli.scale import scale_command
from simulate.cli.spectrum import spectrum_command
from simulate.cli.summary import summary_command

__all__ = ["main"]


@click.group(cls=ErrorReportingGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, "--version", prog_name="swaysim", message="%(prog)s %(version)s")
@debug_option
def main():
    """swaysim: earthquake and harmonic loads through shear-frame building models.

    Results support, and never replace, the judgement of a qualified engineer.
    """


main.add_command(run_command)
main.add_command(modes_command)
main.add_command(motions_command)
main.add_command(spectrum_command)
main.add_command(scale_command)
main.add_command(pushover_command)
main.add_command(compare_command)
main.add_command(summary_command)
main.add_command(collect_command)
