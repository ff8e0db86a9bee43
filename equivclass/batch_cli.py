"""Command line: `equivclass batch INPUT` — every record of a file or of standard input, streamed out.

Exit 0 with a one-line tally on stderr ("N records, K errors, M written"); with --strict, exit 1 when any
record failed; exit 2 for a fault of the run itself (missing file, bad option, unreachable cluster);
exit 130 when interrupted (the rows written so far form a valid file).
"""
from __future__ import annotations

import os
import sys

import click

from .cli import guarded, model_options, options_from
from .records import LAYOUTS, count_records, read_records


@click.command()
@click.argument("input_path", metavar="INPUT")
@click.option("-o", "--output", default="-", show_default=True, help="Output file ('-' = standard output).")
@click.option("--format", "fmt", type=click.Choice(["jsonl", "csv", "sdf"]), default="jsonl", show_default=True,
              help="jsonl: a full report a line; csv: a row a record; sdf: the records with result tags.")
@click.option("--read-as", "layout", type=click.Choice(LAYOUTS), default=None,
              help="Input layout when the file name does not tell (e.g. for '-').")
@click.option("--column", default="smiles", show_default=True, help="Structure column of CSV/TSV input.")
@click.option("--name-column", default=None, help="Name column of CSV/TSV input (default: name/id/title).")
@click.option("-j", "--jobs", type=int, default=1, show_default=True, help="Worker processes.")
@click.option("--cluster", "cluster", default=None, metavar="ADDRESS",
              help="Run on the Dask cluster whose scheduler is at ADDRESS (e.g. tcp://10.0.0.5:8786).")
@click.option("--keep", "keep", multiple=True, type=click.Choice(["inequivalent", "diastereotopic", "second-order"]),
              help="Write only records with this property (repeat to require several); error rows are "
                   "always written.")
@click.option("--time-limit", type=float, default=60.0, show_default=True, metavar="SECONDS",
              help="A structure taking longer becomes an error row (0 = no limit; not applied on a cluster).")
@click.option("--strict", is_flag=True, help="Exit 1 when any record could not be analysed, or the input held none.")
@model_options
@guarded
def batch(input_path, output, fmt, layout, column, name_column, jobs, cluster, keep, time_limit, strict, **kw):
    """Analyse every record of INPUT (.smi/.smiles, .sdf, .csv/.tsv, reaction SMILES, or '-' for stdin).

    Each line of SMILES input is `SMILES [name]`; a line `reactants>agents>products` is a reaction, for
    which every species is analysed and the changes from reactants to products are summarised. Results
    are predictions, not measurements: confirm with measured spectra and local laboratory practice.
    """
    from tqdm import tqdm

    from .batch import WRITERS, has_property, run
    from .options import make_options

    opts = make_options(**options_from(kw))
    records = read_records(input_path, layout=layout, column=column, name_column=name_column)
    show = sys.stderr.isatty()
    total = count_records(input_path, layout) if show and input_path != "-" else None
    out = sys.stdout if output == "-" else open(output, "w", encoding="utf-8", newline="")
    n = errors = written = 0
    interrupted = False
    results = None
    try:
        writer = WRITERS[fmt](out, nuclei=opts.nuclei, mhz=opts.mhz)
        results = run(records, opts, jobs=jobs, scheduler=cluster, time_limit=time_limit)
        with tqdm(results, total=total, unit="rec", file=sys.stderr, disable=not show,
                  dynamic_ncols=True) as bar:
            for result in bar:
                n += 1
                errors += bool(result.error)
                if has_property(result, keep, opts.mhz):
                    writer.write(result)
                    written += 1
    except KeyboardInterrupt:
        interrupted = True
    except BrokenPipeError:
        # the reader stopped early (e.g. `| head`): nothing more to write or say
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        sys.exit(0)
    finally:
        if results is not None:
            results.close()      # stops worker processes or the cluster client
        if out is not sys.stdout:
            out.close()
    tail = " (interrupted)" if interrupted else ""
    click.echo(f"equivclass batch: {n} records, {errors} errors, {written} written{tail}", err=True)
    if interrupted:
        sys.exit(130)
    if strict and (errors or n == 0):   # strict: a failed record, or an input with no record, fails
        sys.exit(1)
