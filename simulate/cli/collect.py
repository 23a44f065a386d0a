"""``swaysim collect RUN_DIR -o OUT.nc``: the results file of a run folder."""

from __future__ import annotations

from pathlib import Path

import click

from simulate.cli.options import check_output_file, debug_option
from simulate.results.netcdf import WRITERS
from simulate.suite.jobs import TWIN
from simulate.suite.store import RunFolder, collect, variant_output


@click.command("collect", short_help="Write the results file of a run folder.")
@click.argument("run_dir", metavar="RUN_DIR", type=click.Path(path_type=Path))
@click.option("-o", "--output", type=click.Path(dir_okay=False, path_type=Path), required=True,
              metavar="OUT.nc", help="Results file to write (NetCDF). A linear twin's results go to "
                                     "OUT-linear.nc next to it.")
@click.option("--partial", is_flag=True,
              help="Write the analyses that have finished so far (an interrupted or running suite) "
                   "instead of refusing.")
@click.option("--compress", is_flag=True,
              help="zlib-compress the histories too (envelopes always are): about 15 % smaller, "
                   "several times slower to write.")
@debug_option
def collect_command(run_dir: Path, output: Path, partial: bool, compress: bool):
    """Merge the batches of RUN_DIR (made by swaysim run) into one results file.

    The file has the same variables as the one swaysim run writes, records in
    the order of the jobs; it is written atomically.
    """
    folder = RunFolder.open(run_dir)
    for variant in dict.fromkeys(row["variant"] for row in folder.manifest["jobs"]):
        check_output_file(variant_output(output, variant), tuple(WRITERS), "results")
    written = collect(folder.path, output, partial=partial, compress_histories=compress)
    for variant, path in written.items():
        jobs = [row for row in folder.manifest["jobs"] if row["variant"] == variant]
        finished = folder.finished(check=False)
        done = [row for row in jobs if row["failed"] is None and row["batch"] in finished]
        failed = [row for row in jobs if row["failed"] is not None]
        what = "linear twin results" if variant == TWIN else "results"
        text = f"{what} written to {path}: {len(done)} analys{'is' if len(done) == 1 else 'es'}"
        if failed:
            text += f", {len(failed)} record file{'s' if len(failed) != 1 else ''} unreadable"
        if len(done) + len(failed) < len(jobs):
            text += f", {len(jobs) - len(done) - len(failed)} not finished (left out)"
        click.echo(text)
