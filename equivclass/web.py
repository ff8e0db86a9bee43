"""Local web page: paste a SMILES or MOL block or upload a .mol/.sdf, pick field and nuclei, read the report.

`create_app(...)` returns a Flask application with one page ("/"): GET shows the form, POST analyses
the input with `analyze()` and shows the report (`html_report.report_fragment`) under the form, or a
one-line message for bad input (HTTP 400; never a traceback). The only data read is the request itself:
pasted text is always treated as text (never as a file name) and an upload is read in memory.
Limits: request size (`max_bytes`), heavy atoms (`max_heavy_atoms`), field range.
"""
from __future__ import annotations

import html

from flask import Flask, request

from .errors import InputError
from .html_report import REPORT_CSS, report_fragment, simulated_spectrum_svg

DEFAULT_MAX_BYTES = 200_000
DEFAULT_MAX_HEAVY_ATOMS = 150
MHZ_RANGE = (20.0, 1500.0)
UPLOAD_SUFFIXES = (".mol", ".sdf", ".sd", ".mdl")

_PAGE_CSS = """
body { background: #eef2f5; }
header.bar { background: #123b5e; color: #fff; padding: 12px 22px; }
header.bar b { font-size: 1.15em; letter-spacing: .02em; }
header.bar span { opacity: .8; margin-left: 10px; }
form.ask { background: #fff; border: 1px solid var(--line); border-radius: 10px; padding: 14px 16px;
           display: grid; grid-template-columns: 1fr 230px; gap: 10px 18px; }
form.ask label { font-weight: 600; font-size: .92em; display: block; margin-bottom: 3px; }
form.ask textarea { width: 100%; min-height: 120px; font: 13px/1.35 ui-monospace, "DejaVu Sans Mono", monospace;
                    border: 1px solid #b9c3cc; border-radius: 6px; padding: 7px; resize: vertical; }
form.ask input[type=text], form.ask input[type=number] { width: 100%; padding: 6px; border: 1px solid #b9c3cc;
                    border-radius: 6px; font-size: 14px; }
form.ask .side > div { margin-bottom: 10px; }
form.ask button { background: #0d5aa0; color: #fff; border: 0; border-radius: 6px; padding: 9px 18px;
                  font-size: 15px; font-weight: 600; cursor: pointer; width: 100%; }
form.ask button:hover { background: #0a4883; }
.hint { font-size: .84em; color: var(--muted); margin-top: 3px; }
.message { background: #fdecec; border: 1px solid #d9534f; color: #7a1c1a; border-radius: 8px; padding: 10px 14px;
           margin: 14px 0; font-weight: 550; }
.result { background: #fff; border: 1px solid var(--line); border-radius: 10px; padding: 4px 18px 18px;
          margin-top: 16px; }
@media (max-width: 720px) { form.ask { grid-template-columns: 1fr; } }
"""


def _e(x) -> str:
    return html.escape(str(x), quote=True)


def _page(structure: str = "", mhz: str = "400", nuclei: str = "1H,19F,31P", message: str = "",
          body: str = "", limits: str = "") -> str:
    msg = f"<div class='message' id='message' role='alert'>{_e(message)}</div>" if message else ""
    return f"""<!DOCTYPE html><html lang="en"><head><meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>equivclass — spin systems from a structure</title><style>{REPORT_CSS}{_PAGE_CSS}</style></head>
<body><header class="bar"><b>equivclass</b><span>spin systems predicted from a structure</span></header>
<main>
<form class="ask" method="post" action="/" enctype="multipart/form-data">
  <div>
    <label for="structure">SMILES or MOL block</label>
    <textarea id="structure" name="structure" spellcheck="false"
      placeholder="e.g. CCOC(C)=O, or paste a whole MOL block">{_e(structure)}</textarea>
    <label for="upload" style="margin-top:8px">or upload a .mol / .sdf file (first record)</label>
    <input type="file" id="upload" name="upload" accept=".mol,.sdf,.sd,.mdl">
    <div class="hint">{_e(limits)}</div>
  </div>
  <div class="side">
    <div><label for="mhz">Field (1H frequency, MHz)</label>
      <input type="number" id="mhz" name="mhz" min="{MHZ_RANGE[0]:g}" max="{MHZ_RANGE[1]:g}" step="any"
        value="{_e(mhz)}"></div>
    <div><label for="nuclei">Observed nuclei</label>
      <input type="text" id="nuclei" name="nuclei" value="{_e(nuclei)}">
      <div class="hint">comma-separated, e.g. 1H,19F or 13C</div></div>
    <div><button type="submit" id="run">Predict spin systems</button></div>
  </div>
</form>
{msg}
{f"<div class='result' id='result'>{body}</div>" if body else ""}
</main></body></html>"""


def _read_input(form, files, max_bytes: int) -> tuple[str, str]:
    """(structure text, record name) from the upload if one was sent, else from the text box."""
    up = files.get("upload")
    if up is not None and up.filename:
        name = up.filename.replace("\\", "/").rsplit("/", 1)[-1][:80] or "upload"
        if not name.lower().endswith(UPLOAD_SUFFIXES):
            raise InputError(f"{name}: upload a .mol or .sdf file")
        data = up.stream.read(max_bytes + 1)
        if len(data) > max_bytes:
            raise InputError(f"{name}: file larger than {max_bytes // 1000} kB")
        if b"\x00" in data:
            raise InputError(f"{name}: binary data, not a MOL/SDF file")
        try:
            text = data.decode("utf-8")
        except UnicodeDecodeError:
            raise InputError(f"{name}: file is not UTF-8 text") from None
        if not text.strip():
            raise InputError(f"{name}: file is empty")
        return text, name.rsplit(".", 1)[0] or "upload"
    text = form.get("structure", "")
    if len(text.encode("utf-8")) > max_bytes:
        raise InputError(f"input: text larger than {max_bytes // 1000} kB")
    if not text.strip():
        raise InputError("input: paste a SMILES or MOL block, or choose a file")
    return text, "input"


def _field(value: str) -> float:
    try:
        mhz = float(value)
    except (TypeError, ValueError):
        raise InputError(f"field: {value!r} is not a number of MHz") from None
    if not (MHZ_RANGE[0] <= mhz <= MHZ_RANGE[1]):
        raise InputError(f"field: {mhz:g} MHz is outside {MHZ_RANGE[0]:g}–{MHZ_RANGE[1]:g} MHz")
    return mhz


def create_app(max_bytes: int = DEFAULT_MAX_BYTES, max_heavy_atoms: int = DEFAULT_MAX_HEAVY_ATOMS,
               spectrum: bool = True) -> Flask:
    """Flask application serving the form and the report page."""
    from .analysis import analyze
    from .structure import read_structure

    app = Flask("equivclass.web")
    # whole request (form fields, file and multipart overhead) may not exceed this
    app.config["MAX_CONTENT_LENGTH"] = max_bytes + 16_384
    app.config["MAX_FORM_MEMORY_SIZE"] = max_bytes + 16_384
    limits = (f"Up to {max_bytes // 1000} kB of input and {max_heavy_atoms} heavy atoms. "
              "Results are estimates from the structure.")

    @app.get("/")
    def form_page():
        return _page(limits=limits)

    @app.post("/")
    def run():
        structure = request.form.get("structure", "")[:max_bytes]
        mhz_text = request.form.get("mhz", "400")[:40]
        nuclei = request.form.get("nuclei", "1H,19F,31P")[:200]
        keep = dict(structure=structure, mhz=mhz_text, nuclei=nuclei, limits=limits)
        try:
            text, name = _read_input(request.form, request.files, max_bytes)
            mhz = _field(mhz_text)
            if not nuclei.strip():
                raise InputError("nuclei: name at least one isotope, e.g. 1H")
            # a trailing newline keeps one-line text from ever being taken as a file name
            structure_record = read_structure(text if text.endswith("\n") else text + "\n", name=name,
                                              max_heavy_atoms=max_heavy_atoms)
            report = analyze(structure_record, mhz=mhz, nuclei=nuclei, max_heavy_atoms=max_heavy_atoms)
            svg = simulated_spectrum_svg(report) if spectrum else None
            return _page(body=report_fragment(report, spectrum_svg=svg), **keep)
        except InputError as exc:
            text = " ".join(str(exc).replace(" (raise it with --max-atoms)", "").split())
            return _page(message=text[:400], **keep), 400
        except RecursionError:
            return _page(message="input: structure too large for the symmetry search", **keep), 400
        except Exception as exc:          # a fault of the program: one line, no traceback
            app.logger.error("internal error: %s: %s", type(exc).__name__, exc)
            return _page(message=f"internal error ({type(exc).__name__}); the input could not be analysed",
                         **keep), 500

    @app.errorhandler(413)
    def too_large(_exc):
        return _page(message=f"input: request larger than {max_bytes // 1000} kB", limits=limits), 413

    @app.errorhandler(404)
    def not_found(_exc):
        return _page(message="no such page; use the form below", limits=limits), 404

    @app.errorhandler(405)
    def not_allowed(_exc):
        return _page(message="method not allowed here", limits=limits), 405

    return app
