"""Commands `equivclass spectrum STRUCTURE` and `equivclass spin-system FILE.json`.

Both write the predicted line list as text (default), CSV, JCAMP-DX and a PNG/SVG plot.  Errors are
one line on stderr and exit 2 (``cli.guarded``).
"""
from __future__ import annotations

import json
import os

import click
import numpy as np

from .cli import _parse_shift, _read_shift_file, guarded, model_options, options_from
from .errors import InputError

_FILE = click.Path(dir_okay=False)


def _outputs(func):
    """Options shared by both commands: line shape and output files."""
    decorators = [
        click.option("--linewidth", "linewidth_hz", type=float, default=1.0, show_default=True,
                     help="Lorentzian full width at half height (Hz)."),
        click.option("--gaussian", "gaussian_hz", type=float, default=0.0, show_default=True,
                     help="Extra Gaussian broadening, full width at half height (Hz); 0 = none."),
        click.option("--points", type=int, default=16384, show_default=True,
                     help="Points of the computed spectrum (plot and JCAMP-DX)."),
        click.option("--plot", "plot_path", type=_FILE, default=None, metavar="FILE.png|FILE.svg",
                     help="Write the spectrum plot (format from the suffix)."),
        click.option("--lines", "lines_path", type=_FILE, default=None, metavar="FILE.csv",
                     help="Write the line list as CSV."),
        click.option("--jcamp", "jcamp_path", type=_FILE, default=None, metavar="FILE.jdx",
                     help="Write the spectrum as JCAMP-DX 5.01."),
    ]
    for d in reversed(decorators):
        func = d(func)
    return func


def _check_plot_suffix(path):
    if path and not str(path).lower().endswith((".png", ".svg")):
        raise InputError(f"--plot {path}: file must end in .png or .svg")


def _emit(pred, plot_path, lines_path, jcamp_path, linewidth_hz, gaussian_hz, points, title=None):
    from .predicted_spectrum import stick_text, write_files

    write_files(pred, plot=plot_path, lines=lines_path, jcamp=jcamp_path, linewidth_hz=linewidth_hz,
                gaussian_hz=gaussian_hz, points=points, title=title)
    if not (plot_path or lines_path or jcamp_path):
        click.echo(stick_text(pred, title=title))
    else:
        for n in pred.notes:
            click.echo(f"note: {n}", err=True)


@click.command("spectrum")
@click.argument("structure")
@click.option("--observe", default="1H", show_default=True, help="Observed isotope, e.g. 1H or 19F.")
@click.option("--decouple", default="", metavar="ISOTOPES",
              help="Isotopes to decouple, e.g. '19F,31P'.")
@_outputs
@model_options
@click.option("--stereoisomer", type=int, default=0, show_default=True,
              help="Which stereoisomer to use when stereo is unspecified (0 = first).")
@click.option("--shift", "shift_values", multiple=True, metavar="ATOM=PPM",
              help="Your own shift for an atom (0-based index); applies to its whole set. Repeatable.")
@click.option("--shift-file", type=_FILE, default=None, help="CSV (atom,ppm) or JSON file of shifts.")
@guarded
def spectrum_command(structure, observe, decouple, linewidth_hz, gaussian_hz, points, plot_path,
                     lines_path, jcamp_path, stereoisomer, shift_values, shift_file, **kw):
    """Predicted spectrum of STRUCTURE (SMILES, MOL/SDF file or '-'), simulated fragment by fragment.

    With no output file the stick list is printed.  All values are estimates.
    """
    from .predicted_spectrum import predict

    _check_plot_suffix(plot_path)
    opts = options_from(kw)
    opts["shifts"] = _parse_shift(shift_values) + (_read_shift_file(shift_file) if shift_file else ())
    pred = predict(structure, observe=observe, decouple=decouple, stereoisomer=stereoisomer, **opts)
    _emit(pred, plot_path, lines_path, jcamp_path, linewidth_hz, gaussian_hz, points)


def read_spin_system(path, mhz=None, observe=None):
    """(SpinSystem, observed isotope, 1H MHz) from a JSON file.

    Keys: ``shifts_hz``, ``j_hz`` (symmetric, Hz), optional ``spins``, ``isotope`` (one for all nuclei)
    or ``isotopes`` (one per nucleus), ``mhz`` (spectrometer 1H frequency), ``title``.
    """
    from . import nucdata
    from .simulate import system_from_mapping

    try:
        with open(path, encoding="utf-8") as fh:
            data = json.load(fh)
    except OSError as exc:
        raise InputError(f"{path}: cannot be read ({exc.strerror})") from None
    except (json.JSONDecodeError, UnicodeDecodeError) as exc:
        raise InputError(f"{path}: not valid JSON ({getattr(exc, 'msg', exc)})") from None
    if not isinstance(data, dict):
        raise InputError(f"{path}: expected a JSON object with shifts_hz and j_hz")
    data = dict(data)
    file_mhz = data.pop("mhz", None)
    one = data.pop("isotope", None)
    if one is not None:
        if "isotopes" in data:
            raise InputError(f"{path}: give either isotope or isotopes, not both")
        if not isinstance(data.get("shifts_hz"), list):
            raise InputError(f"{path}: shifts_hz must be a list of numbers (Hz)")
        data["isotopes"] = [nucdata.isotope(str(one)).symbol] * len(data["shifts_hz"])
    elif isinstance(data.get("isotopes"), list):
        data["isotopes"] = [nucdata.isotope(str(x)).symbol for x in data["isotopes"]]
    system = system_from_mapping(data, record=str(path))
    mhz = mhz if mhz is not None else file_mhz if file_mhz is not None else 400.0
    try:
        mhz = float(mhz)
    except (TypeError, ValueError):
        raise InputError(f"{path}: mhz must be a number") from None
    if not np.isfinite(mhz) or mhz <= 0:
        raise InputError(f"{path}: mhz must be a positive number, got {mhz!r}")
    if observe is None:
        observe = system.isotopes[0]
    else:
        observe = nucdata.isotope(observe).symbol
    if observe not in system.isotopes:
        raise InputError(f"{path}: no nucleus of the observed isotope {observe}")
    return system, observe, mhz, data.get("title")


@click.command("spin-system")
@click.argument("path", type=_FILE)
@click.option("--mhz", type=float, default=None, help="Spectrometer 1H frequency (MHz); default from the "
              "file, else 400.")
@click.option("--observe", default=None, help="Observed isotope (default: that of the first nucleus).")
@click.option("--decouple", default="", metavar="ISOTOPES", help="Isotopes to decouple.")
@_outputs
@guarded
def system_command(path, mhz, observe, decouple, linewidth_hz, gaussian_hz, points, plot_path, lines_path,
                   jcamp_path):
    """Spectrum of a hand-defined spin system (JSON: shifts_hz, j_hz, optional spins, isotope, mhz).

    Shifts are offsets in Hz from 0 ppm of the observed isotope; ppm = Hz / observe frequency.
    """
    from . import nucdata
    from .predicted_spectrum import FragmentNote, PredictedSpectrum, largest_block
    from .simulate import simulate

    _check_plot_suffix(plot_path)
    system, observe, mhz, title = read_spin_system(path, mhz, observe)
    dec = tuple(dict.fromkeys(nucdata.isotope(x).symbol for x in
                              decouple.replace(";", ",").replace(" ", ",").split(",") if x))
    t = simulate(system, observe, dec)
    n_obs = sum(1 for i in system.isotopes if i == observe)
    name = title or os.path.splitext(os.path.basename(str(path)))[0]
    pred = PredictedSpectrum(name, observe, dec, mhz, nucdata.larmor_mhz(observe, mhz), t,
                             (FragmentNote(0, "spin system", 1, "exact", n_obs, largest_block(system, observe, dec)),))
    _emit(pred, plot_path, lines_path, jcamp_path, linewidth_hz, gaussian_hz, points,
          title=f"Simulated {observe} spectrum of spin system {name} at {pred.observe_mhz:.6g} MHz")
