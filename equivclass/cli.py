"""Command line: `equivclass label STRUCTURE` and the shared model options of every command.

Errors in the input are one line on stderr and exit code 2; nothing prints a traceback.
"""
from __future__ import annotations

import functools
import json
import sys

import click

from .errors import InputError


def _fail(message: str, code: int = 2):
    click.echo(f"equivclass: {message}", err=True)
    sys.exit(code)


def guarded(func):
    """Turn InputError into one line and exit 2, anything unexpected into one line and exit 3."""
    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        try:
            return func(*args, **kwargs)
        except InputError as exc:
            _fail(str(exc), 2)
        except (click.exceptions.Exit, click.ClickException, SystemExit):
            raise
        except RecursionError:
            _fail("structure too large for the symmetry search (recursion limit)", 2)
        except Exception as exc:  # a fault of the program, reported in one line
            _fail(f"internal error ({type(exc).__name__}): {' '.join(str(exc).split())[:200]}", 3)
    return wrapper


def _parse_shift(values) -> tuple:
    out = []
    for v in values:
        atom, sep, ppm = v.partition("=")
        try:
            if not sep:
                raise ValueError
            out.append((int(atom), float(ppm)))
        except ValueError:
            raise InputError(f"--shift {v!r}: write ATOM=PPM with a 0-based atom index, e.g. 3=1.25") from None
    return tuple(out)


def _read_shift_file(path) -> tuple:
    """Shifts from CSV (atom,ppm per line) or JSON ({"3": 1.25} or [[3, 1.25], …])."""
    try:
        with open(path, encoding="utf-8") as fh:
            text = fh.read()
    except OSError as exc:
        raise InputError(f"{path}: shift file cannot be read ({exc.strerror})") from None
    try:
        if text.lstrip().startswith(("{", "[")):
            data = json.loads(text)
            items = data.items() if isinstance(data, dict) else data
            return tuple((int(a), float(p)) for a, p in items)
        out = []
        for n, line in enumerate(text.splitlines(), 1):
            line = line.strip()
            if not line or line.startswith("#") or line.lower().startswith("atom"):
                continue
            a, p = [x.strip() for x in line.replace(";", ",").split(",")[:2]]
            out.append((int(a), float(p)))
        return tuple(out)
    except (ValueError, TypeError):
        raise InputError(f"{path}: shift file must hold atom,ppm pairs (0-based atom index)") from None


def model_options(func):
    """Options that change the model, shared by every command that analyses structures."""
    decorators = [
        click.option("--mhz", type=float, default=400.0, show_default=True,
                     help="Spectrometer field as the 1H frequency in MHz."),
        click.option("--nuclei", default="1H,19F,31P", show_default=True,
                     help="Observed isotopes, e.g. '1H,19F' or '13C'."),
        click.option("--amide-rotation", type=click.Choice(["slow", "fast"]), default="slow",
                     show_default=True, help="Amide C–N rotation on the NMR time scale."),
        click.option("--labile-coupled", is_flag=True,
                     help="Keep O–H, N–H and S–H protons coupled (dry, non-exchanging solvent)."),
        click.option("--chiral-medium", is_flag=True,
                     help="Analyse in a chiral medium: enantiotopic nuclei become distinct."),
        click.option("--threshold", "threshold_hz", type=float, default=0.3, show_default=True,
                     help="Couplings below this |J| (Hz) count as zero."),
        click.option("--max-atoms", "max_heavy_atoms", type=int, default=300, show_default=True,
                     help="Refuse structures with more heavy atoms than this."),
        click.option("--ring-couplings", type=click.Choice(["karplus", "table"]), default="karplus",
                     show_default=True,
                     help="Vicinal H–H across ring bonds: Karplus on embedded conformers, or table values "
                          "(faster)."),
    ]
    for d in reversed(decorators):
        func = d(func)
    return func


def options_from(kw) -> dict:
    return {"mhz": kw["mhz"], "nuclei": kw["nuclei"], "amide_rotation_fast": kw["amide_rotation"] == "fast",
            "labile_coupled": kw["labile_coupled"], "chiral_medium": kw["chiral_medium"],
            "threshold_hz": kw["threshold_hz"], "max_heavy_atoms": kw["max_heavy_atoms"],
            "ring_couplings": kw.get("ring_couplings", "karplus") == "karplus"}


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="equivclass")
def main():
    """Predict NMR spin systems from a structure (all results are estimates)."""


@main.command()
@click.argument("structure")
@click.option("--format", "fmt", type=click.Choice(["text", "json"]), default="text", show_default=True)
@model_options
@click.option("--stereoisomer", type=int, default=0, show_default=True,
              help="Which stereoisomer to analyse when stereo is unspecified (0 = first).")
@click.option("--each-stereoisomer", is_flag=True, help="Analyse every stereoisomer in turn.")
@click.option("--shift", "shift_values", multiple=True, metavar="ATOM=PPM",
              help="Your own shift for an atom (0-based index); applies to its whole set. Repeatable.")
@click.option("--shift-file", type=click.Path(dir_okay=False), default=None,
              help="CSV (atom,ppm) or JSON file of your own shifts.")
@click.option("--picture", "picture_path", type=click.Path(dir_okay=False), default=None,
              metavar="FILE.svg|FILE.png", help="Also write the annotated structure (format from the suffix).")
@guarded
def label(structure, fmt, stereoisomer, each_stereoisomer, shift_values, shift_file, picture_path, **kw):
    """Chemical sets, magnetic subsets, fragments and the spin-system label of STRUCTURE.

    STRUCTURE is a SMILES, a MOL/SDF file (first record), or '-' to read standard input.
    """
    from .analysis import analyze, analyze_each_stereoisomer

    opts = options_from(kw)
    shifts = _parse_shift(shift_values) + (_read_shift_file(shift_file) if shift_file else ())
    opts["shifts"] = shifts
    if each_stereoisomer:
        reports = analyze_each_stereoisomer(structure, **opts)
    else:
        reports = [analyze(structure, stereoisomer=stereoisomer, **opts)]
    if picture_path:
        from .draw import picture_format, write_picture
        picture_format(picture_path)
        if len(reports) == 1:
            write_picture(reports[0], picture_path)
        else:
            stem, _, ext = picture_path.rpartition(".")
            for k, r in enumerate(reports):
                write_picture(r, f"{stem}_{k}.{ext}")
    if fmt == "json":
        payload = [r.to_dict() for r in reports]
        click.echo(json.dumps(payload if each_stereoisomer else payload[0], indent=2, ensure_ascii=False))
    else:
        click.echo("\n\n".join(r.to_text() for r in reports))


from .batch_cli import batch  # noqa: E402
main.add_command(batch)

from .web_cli import draw_command, serve  # noqa: E402
main.add_command(serve)
main.add_command(draw_command)

from .spectrum_cli import spectrum_command, system_command  # noqa: E402
main.add_command(spectrum_command)
main.add_command(system_command)
