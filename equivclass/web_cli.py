"""Commands `equivclass serve` (the local web page) and `equivclass draw` (annotated picture).

Registered on the `main` group by the last lines of cli.py. `write_picture(report, path)` writes
the picture for a command that already has a Report (SVG or PNG by the file's suffix).
"""
from __future__ import annotations

import click

from .cli import guarded, model_options, options_from
from .draw import picture_format, write_picture
from .errors import InputError


@click.command("draw")
@click.argument("structure")
@click.option("-o", "--output", "output", required=True, metavar="FILE.svg|FILE.png",
              help="Picture file; the format follows the suffix.")
@click.option("--html", "html_path", default=None, metavar="FILE.html",
              help="Also write the self-contained HTML report.")
@click.option("--size", nargs=2, type=int, default=(520, 440), show_default=True, metavar="W H",
              help="Picture size in pixels.")
@model_options
@click.option("--stereoisomer", type=int, default=0, show_default=True,
              help="Which stereoisomer to draw when stereo is unspecified (0 = first).")
@guarded
def draw_command(structure, output, html_path, size, stereoisomer, **kw):
    """Draw STRUCTURE with every active nucleus marked by its letter and primes, one colour per set."""
    from .analysis import analyze

    picture_format(output)
    report = analyze(structure, stereoisomer=stereoisomer, **options_from(kw))
    write_picture(report, output, size=tuple(size))
    if html_path:
        from .html_report import html_report, simulated_spectrum_svg

        try:
            with open(html_path, "w", encoding="utf-8") as fh:
                fh.write(html_report(report, spectrum_svg=simulated_spectrum_svg(report)))
        except OSError as exc:
            raise InputError(f"{html_path}: cannot write report ({exc.strerror})") from None
    click.echo(f"{report.name}: {report.label} -> {output}" + (f", {html_path}" if html_path else ""))


@click.command("serve")
@click.option("--port", type=click.IntRange(1, 65535), default=8765, show_default=True)
@click.option("--host", default="127.0.0.1", show_default=True,
              help="Address to listen on; anything but 127.0.0.1 exposes the page to the network.")
@click.option("--max-kb", type=click.IntRange(1, 5000), default=200, show_default=True,
              help="Largest accepted input (pasted text or uploaded file).")
@click.option("--max-atoms", "max_heavy_atoms", type=click.IntRange(1, 1000), default=150,
              show_default=True, help="Refuse structures with more heavy atoms than this.")
@guarded
def serve(port, host, max_kb, max_heavy_atoms):
    """Start the local web page (http://127.0.0.1:PORT/ by default)."""
    from .web import create_app

    if host not in ("127.0.0.1", "localhost", "::1"):
        click.echo(f"equivclass: listening on {host}: the page is reachable from other machines", err=True)
    app = create_app(max_bytes=max_kb * 1000, max_heavy_atoms=max_heavy_atoms)
    click.echo(f"equivclass page on http://{host}:{port}/  (Ctrl-C to stop)")
    app.run(host=host, port=port, debug=False, use_reloader=False)
