"""Bulk runs: analyse input records in order (in this process, in worker processes, or on a Dask
cluster), keep those with a chosen property, summarise reactions, and stream JSON Lines, CSV or SDF.

Every record goes through the same `analyze()` as a single structure. A bad record becomes one error
result ("record N: name: fault") and the run goes on. Results come back in input order while at most a
fixed window of records is in flight, so memory stays bounded whatever the input size.

Reactions (`reactants>agents>products`) are one result holding a result per species and a summary of
what changes from reactants to products (agents are analysed but not compared). In JSON Lines a
reaction is one object with its species nested; in CSV it is one row per species (kind = role) and a
summary row (kind "reaction", column `changes`); in SDF each species is a record tagged with its role,
the reaction and the changes.
"""
from __future__ import annotations

import csv
import json
import multiprocessing
import re
import signal
import threading
from collections import Counter, deque
from concurrent.futures import ProcessPoolExecutor
from concurrent.futures.process import BrokenProcessPool
from contextlib import contextmanager
from dataclasses import dataclass
from typing import Iterable, Iterator

from rdkit import Chem
from rdkit.Chem import rdDepictor

from . import nucdata
from .analysis import analyze
from .errors import InputError
from .options import Options, make_options
from .records import Record
from .report import CAUTION
from .structure import read_structure

PROPERTIES = ("inequivalent", "diastereotopic", "second-order")
ROLES = ("reactant", "agent", "product")
CHUNK_SIZE = 8
WINDOW_PER_WORKER = 4
TIME_LIMIT = 60.0               # seconds one structure may take before it becomes an error row
CONNECT_TIMEOUT = "20s"        # how long to wait for a cluster scheduler
_ATOM_MAP = re.compile(r":\d+\]")


@dataclass(frozen=True)
class Result:
    """The outcome of one record (or of one species of a reaction, then `role` is set).

    `report` is `Report.to_dict()` or None; `error` is a one-line fault or ""; `note` explains a species
    that was not analysed for a reason that is not a fault (no observed nuclei, e.g. a sodium ion).
    """

    number: int
    name: str
    kind: str
    text: str
    report: dict | None = None
    error: str = ""
    role: str = ""
    note: str = ""
    species: tuple = ()
    summary: dict | None = None


# --------------------------------------------------------------------------------------------- analysis

class _Overtime(Exception):
    pass


def _raise_overtime(signum, frame):
    raise _Overtime()


@contextmanager
def _time_limit(seconds: float):
    """Interrupt the analysis after `seconds` (a real-time timer; only in a process's main thread, so
    it does not apply to the threads of a cluster worker)."""
    usable = seconds and seconds > 0 and hasattr(signal, "setitimer") and \
        threading.current_thread() is threading.main_thread()
    if not usable:
        yield
        return
    old = signal.signal(signal.SIGALRM, _raise_overtime)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, old)


def analyse_record(record: Record, options: Options, time_limit: float = TIME_LIMIT) -> Result:
    """Analyse one record; never raises for a fault of the input or of the program.

    A structure whose analysis takes longer than `time_limit` seconds (0 = no limit) is an error row.
    """
    if record.fault:
        return Result(record.number, record.name, record.kind, record.text,
                      error=_numbered(record.number, f"{record.name}: {record.fault}"))
    if record.kind == "reaction":
        return _analyse_reaction(record, options, time_limit)
    report, error = _analyse_text(record.text, record.name, options, time_limit)
    return Result(record.number, record.name, record.kind, record.text, report, _numbered(record.number, error))


def _numbered(number: int, message: str) -> str:
    """'record N: name: fault' (a record without a name is already called 'record N')."""
    if not message:
        return ""
    prefix = f"record {number}: "
    return message if message.startswith(prefix) else prefix + message


def _analyse_text(text: str, name: str, options: Options, time_limit: float) -> tuple[dict | None, str]:
    """(report dict, "") or (None, one-line fault naming the record)."""
    try:
        with _time_limit(time_limit):
            # the trailing newline keeps a SMILES from being taken for a file name
            st = read_structure(text.rstrip("\n") + "\n", name=name, max_heavy_atoms=options.max_heavy_atoms)
            return analyze(st, options=options).to_dict(), ""
    except _Overtime:
        return None, f"{name}: analysis stopped after {time_limit:g} s (raise the time limit to go on)"
    except InputError as exc:
        return None, " ".join(str(exc).split())
    except RecursionError:
        return None, f"{name}: structure too large for the symmetry search (recursion limit)"
    except Exception as exc:  # a fault of the program, reported in one line
        return None, f"{name}: internal error ({type(exc).__name__}): {' '.join(str(exc).split())[:200]}"


def _analyse_reaction(record: Record, options: Options, time_limit: float) -> Result:
    parts = record.text.split(">")
    if len(parts) != 3:
        return Result(record.number, record.name, "reaction", record.text,
                      error=_numbered(record.number, f"{record.name}: reaction SMILES must be "
                                     f"reactants>agents>products (found {len(parts) - 1} '>')"))
    species = []
    for role, part in zip(ROLES, parts):
        for k, smi in enumerate(s for s in part.split(".") if s):
            smi = _ATOM_MAP.sub("]", smi)
            name = f"{record.name} {role} {k + 1}"
            report, error = _analyse_text(smi, name, options, time_limit)
            note = ""
            if error and not _has_observed_element(smi, options):
                error, note = "", f"no observed nuclei ({', '.join(options.nuclei)})"
            species.append(Result(record.number, name, "smiles", smi, report,
                                  _numbered(record.number, error), role=role, note=note))
    compared = [s for s in species if s.role != "agent"]
    failed = [s for s in compared if s.error]
    error, summary = "", None
    if not any(s.role == "reactant" for s in species) or not any(s.role == "product" for s in species):
        error = _numbered(record.number, f"{record.name}: reaction needs at least one reactant and one product")
    elif failed:
        error = (f"record {record.number}: {len(failed)} species could not be analysed; first: "
                 f"{failed[0].error.split(': ', 1)[1]}")
    else:
        summary = reaction_summary([s.report for s in compared if s.role == "reactant" and s.report],
                                   [s.report for s in compared if s.role == "product" and s.report],
                                   options.mhz)
    return Result(record.number, record.name, "reaction", record.text, error=error,
                  species=tuple(species), summary=summary)


def _has_observed_element(smiles: str, options: Options) -> bool:
    mol = Chem.MolFromSmiles(smiles, sanitize=False)
    if mol is None:
        return True      # unreadable: the analysis error stands
    elements = {i.element for i in nucdata.parse_isotope_list(options.nuclei)}
    for atom in mol.GetAtoms():
        if atom.GetSymbol() in elements:
            return True
        if "H" in elements and (atom.GetNumExplicitHs() or not atom.GetNoImplicit()):
            try:
                atom.UpdatePropertyCache(strict=False)
                if atom.GetTotalNumHs():
                    return True
            except Exception:
                return True
    return False


def analyse_chunk(records: list[Record], options: Options, time_limit: float = TIME_LIMIT) -> list[Result]:
    """Analyse a list of records in order (the unit of work sent to a process or a cluster worker)."""
    return [analyse_record(r, options, time_limit) for r in records]


# ------------------------------------------------------------------------------------------ properties

def second_order(fragment: dict, mhz: float) -> bool:
    """A fragment needs simulation at `mhz` when magnetically inequivalent, strongly coupled, or first
    order only above the field (|Δν| < 10·|J|, DESIGN.md §3); null `first_order_above_mhz` means never."""
    above = fragment["first_order_above_mhz"]
    visible = fragment.get("subsets_coupled", fragment["magnetically_inequivalent"])
    return bool(visible or fragment["strongly_coupled"] or above is None or above > mhz)


def properties(report: dict, mhz: float) -> dict:
    """The per-record flags used by filters, CSV columns, SDF tags and reaction summaries.

    first_order_above_mhz: the highest field any fragment needs to be first order, or None when some
    fragment is second order at every field (magnetic inequivalence or equal shifts).
    """
    frags = report["fragments"]
    values = [f["first_order_above_mhz"] for f in frags]
    sets = report["sets"]
    hetero = set()
    for s in sets:
        for c in s["couplings"]:
            other = sets[c["to_set"]]["isotope"]
            if other != s["isotope"]:
                a, b = sorted((s["index"], c["to_set"]))
                hetero.add(f"{sets[a]['isotope']}-{sets[b]['isotope']}")
    return {
        "sets": Counter(s["isotope"] for s in sets),
        "magnetically_inequivalent": sum(1 for f in frags if f["magnetically_inequivalent"]),
        "diastereotopic_sets": sum(1 for s in sets if s["topicity"].get("diastereotopic_to")),
        "second_order_fragments": sum(1 for f in frags if second_order(f, mhz)),
        "first_order_above_mhz": None if any(v is None for v in values) else max(values, default=0.0),
        "heteronuclear_couplings": sorted(hetero),
    }


def has_property(result: Result, wanted: Iterable[str], mhz: float) -> bool:
    """True when the record shows every wanted property (error results are always kept).

    inequivalent: a magnetically inequivalent fragment; diastereotopic: a set with a diastereotopic
    partner; second-order: a fragment that is not first order at the field. A reaction qualifies when
    one of its reactants or products does.
    """
    wanted = tuple(wanted)
    if not wanted or result.error:
        return True
    if result.kind == "reaction":
        return any(has_property(s, wanted, mhz) for s in result.species if s.role != "agent" and s.report)
    if result.report is None:
        return False
    p = properties(result.report, mhz)
    test = {"inequivalent": p["magnetically_inequivalent"] > 0, "diastereotopic": p["diastereotopic_sets"] > 0,
            "second-order": p["second_order_fragments"] > 0}
    for w in wanted:
        if w not in test:
            raise InputError(f"unknown property {w!r}: choose from {', '.join(PROPERTIES)}")
    return all(test[w] for w in wanted)


# ----------------------------------------------------------------------------------- reaction summary

def _tally(reports: list[dict], mhz: float) -> dict:
    mi = dia = so = centres = 0
    isotopes, hetero, labels = set(), set(), []
    for r in reports:
        p = properties(r, mhz)
        mi += p["magnetically_inequivalent"]
        dia += p["diastereotopic_sets"]
        so += p["second_order_fragments"]
        hetero.update(p["heteronuclear_couplings"])
        isotopes.update(p["sets"])
        labels += [f["label"] for f in r["fragments"]]
        mol = Chem.MolFromSmiles(r["smiles"])
        if mol is not None:
            centres += len(Chem.FindMolChiralCenters(mol, includeUnassigned=True, useLegacyImplementation=False))
    return {"magnetically_inequivalent_fragments": mi, "diastereotopic_sets": dia,
            "second_order_fragments": so, "stereocentres": centres, "isotopes": sorted(isotopes),
            "heteronuclear_couplings": sorted(hetero), "labels": labels}


def reaction_summary(reactants: list[dict], products: list[dict], mhz: float) -> dict:
    """What changes from reactants to products: counts before and after, and one sentence per change."""
    before, after = _tally(reactants, mhz), _tally(products, mhz)
    changes = []
    if after["stereocentres"] != before["stereocentres"]:
        changes.append(f"stereocentres {before['stereocentres']} -> {after['stereocentres']}")
    if after["diastereotopic_sets"] != before["diastereotopic_sets"]:
        verb = "appear" if after["diastereotopic_sets"] > before["diastereotopic_sets"] else "disappear"
        changes.append(f"diastereotopic sets {verb}: {before['diastereotopic_sets']} -> "
                       f"{after['diastereotopic_sets']}")
    if after["magnetically_inequivalent_fragments"] != before["magnetically_inequivalent_fragments"]:
        changes.append(f"magnetically inequivalent fragments {before['magnetically_inequivalent_fragments']}"
                       f" -> {after['magnetically_inequivalent_fragments']}")
    if after["second_order_fragments"] != before["second_order_fragments"]:
        changes.append(f"second-order fragments at {mhz:g} MHz {before['second_order_fragments']} -> "
                       f"{after['second_order_fragments']}")
    for word, key in (("heteronuclear coupling", "heteronuclear_couplings"), ("observed isotope", "isotopes")):
        gained = sorted(set(after[key]) - set(before[key]))
        lost = sorted(set(before[key]) - set(after[key]))
        if gained:
            changes.append(f"new {word}: {', '.join(gained)}")
        if lost:
            changes.append(f"lost {word}: {', '.join(lost)}")
    gained = Counter(after["labels"]) - Counter(before["labels"])
    lost = Counter(before["labels"]) - Counter(after["labels"])
    if gained:
        changes.append("fragments gained: " + ", ".join(sorted(gained.elements())))
    if lost:
        changes.append("fragments lost: " + ", ".join(sorted(lost.elements())))
    return {"before": before, "after": after, "changes": changes or ["no change in the spin systems"]}


# --------------------------------------------------------------------------------------------- running

def run(records: Iterable[Record], options: Options | dict | None = None, jobs: int = 1,
        scheduler: str | None = None, chunk_size: int = CHUNK_SIZE,
        time_limit: float = TIME_LIMIT) -> Iterator[Result]:
    """Results of `records` in input order: in this process (jobs=1), in `jobs` worker processes, or on
    the Dask cluster whose scheduler listens at `scheduler` (an address such as 'tcp://host:8786')."""
    opts = options if isinstance(options, Options) else make_options(**(options or {}))
    if jobs < 1:
        raise InputError(f"--jobs {jobs}: give one worker or more")
    if scheduler:
        return _run_dask(records, opts, scheduler, chunk_size, time_limit)
    if jobs > 1:
        return _run_pool(records, opts, jobs, chunk_size, time_limit)
    return (analyse_record(r, opts, time_limit) for r in records)


def _chunks(records: Iterable[Record], size: int) -> Iterator[list[Record]]:
    chunk = []
    for r in records:
        chunk.append(r)
        if len(chunk) >= size:
            yield chunk
            chunk = []
    if chunk:
        yield chunk


def _lost(chunk: list[Record], why: str) -> list[Result]:
    return [Result(r.number, r.name, r.kind, r.text, error=_numbered(r.number, f"{r.name}: {why}"))
            for r in chunk]


def _ignore_interrupt() -> None:
    signal.signal(signal.SIGINT, signal.SIG_IGN)


def _pool(jobs: int) -> ProcessPoolExecutor:
    methods = multiprocessing.get_all_start_methods()
    ctx = multiprocessing.get_context("forkserver" if "forkserver" in methods else "spawn")
    if "forkserver" in methods:
        ctx.set_forkserver_preload(["equivclass.batch"])
    return ProcessPoolExecutor(max_workers=jobs, mp_context=ctx, initializer=_ignore_interrupt)


def _run_pool(records, opts: Options, jobs: int, chunk_size: int, limit: float) -> Iterator[Result]:
    window = jobs * WINDOW_PER_WORKER
    pool = _pool(jobs)
    pending: deque = deque()
    chunks = iter(_chunks(records, chunk_size))
    exhausted = False
    try:
        while True:
            if not exhausted:
                chunk = next(chunks, None)
                if chunk is None:
                    exhausted = True
                else:
                    pending.append((chunk, pool.submit(analyse_chunk, chunk, opts, limit)))
            if not pending:
                break
            if not exhausted and len(pending) < window:
                continue
            chunk0, fut = pending.popleft()     # the oldest group: results stay in input order
            try:
                yield from fut.result()
            except BrokenProcessPool:
                yield from _lost(chunk0, "a worker process died while analysing this record's group")
                pending, pool = _restart(pending, pool, jobs, opts, limit)
    finally:
        if pending:          # stopped early (interrupt): do not wait for analyses still running
            _silence_cancelled_futures()
            for _, fut in pending:
                fut.cancel()
            for proc in list((getattr(pool, "_processes", None) or {}).values()):
                proc.terminate()
            pool.shutdown(wait=False, cancel_futures=True)
        else:
            pool.shutdown(wait=True)


def _silence_cancelled_futures() -> None:
    """Terminating workers makes the pool's manager thread report futures we already cancelled; that
    report is no fault of the run and must not print a traceback on an interrupted run."""
    import threading
    from concurrent.futures import InvalidStateError

    previous = threading.excepthook

    def hook(args):
        if not isinstance(args.exc_value, InvalidStateError):
            previous(args)
    threading.excepthook = hook


def _restart(pending: deque, pool, jobs: int, opts: Options, limit: float):
    """Replace a broken pool and resubmit the chunks that were still in flight."""
    pool.shutdown(wait=False, cancel_futures=True)
    pool = _pool(jobs)
    return deque((c, pool.submit(analyse_chunk, c, opts, limit)) for c, _ in pending), pool


def _run_dask(records, opts: Options, scheduler: str, chunk_size: int, limit: float) -> Iterator[Result]:
    try:
        from distributed import Client
    except ImportError:  # pragma: no cover - dask[distributed] is a dependency
        raise InputError("a cluster run needs the 'distributed' package") from None
    try:
        client = Client(scheduler, timeout=CONNECT_TIMEOUT, set_as_default=False)
    except (OSError, TimeoutError, ValueError) as exc:
        raise InputError(f"cluster scheduler {scheduler}: cannot connect ({' '.join(str(exc).split())[:160]})") \
            from None
    try:
        workers = max(1, len(client.scheduler_info().get("workers", {})))
        window = workers * WINDOW_PER_WORKER
        pending: deque = deque()

        def take():
            chunk0, fut = pending.popleft()
            try:
                return fut.result()
            except Exception as exc:  # a lost worker or a failed task: every record of it is an error row
                return _lost(chunk0, f"cluster task failed ({type(exc).__name__})")

        for chunk in _chunks(records, chunk_size):
            pending.append((chunk, client.submit(analyse_chunk, chunk, opts, limit, pure=False)))
            while len(pending) >= window:
                yield from take()
        while pending:
            yield from take()
    finally:
        client.close()


# --------------------------------------------------------------------------------------------- writers

def record_dict(result: Result) -> dict:
    """One JSON Lines object: `record`, `kind`, the report fields of the JSON contract, and `error`."""
    head = {"record": result.number, "kind": result.kind}
    if result.role:
        head["role"] = result.role
    if result.kind == "reaction":
        return {**head, "name": result.name, "input": result.text,
                "species": [record_dict(s) for s in result.species], "summary": result.summary,
                "caution": CAUTION, "error": result.error or None}
    if result.report is not None:
        return {**head, **result.report, "error": None}
    return {**head, "name": result.name, "input": result.text, "smiles": None, "mhz": None, "nuclei": [],
            "label": None, "label_unicode": None, "fragments": [], "sets": [], "couplings": [],
            "warnings": [], "options": {}, "caution": CAUTION, "note": result.note or None,
            "error": result.error or None}


def csv_columns(nuclei: Iterable[str]) -> list[str]:
    return (["record", "name", "kind", "smiles", "label"] + [f"sets_{n}" for n in nuclei] +
            ["magnetically_inequivalent", "diastereotopic_sets", "second_order_fragments",
             "first_order_above_mhz", "warnings", "changes", "error"])


def flat_rows(result: Result, nuclei: tuple, mhz: float) -> Iterator[dict]:
    """Flat rows of a result: one per record; a reaction gives one row per species, then its summary row."""
    if result.kind == "reaction":
        for s in result.species:
            yield _flat(s, nuclei, mhz, kind=s.role)
        labels = {role: " . ".join(s.report["label"] if s.report else "-" for s in result.species
                                   if s.role == role) for role in ("reactant", "product")}
        yield {"record": result.number, "name": result.name, "kind": "reaction", "smiles": result.text,
               "label": f"{labels['reactant']} >> {labels['product']}" if result.species else "",
               "changes": "; ".join(result.summary["changes"]) if result.summary else "",
               "error": result.error}
    else:
        yield _flat(result, nuclei, mhz, kind=result.kind)


def _flat(result: Result, nuclei: tuple, mhz: float, kind: str) -> dict:
    text = result.text if "\n" not in result.text.strip() else ""   # a MOL block is no SMILES
    row = {"record": result.number, "name": result.name, "kind": kind, "smiles": text,
           "error": result.error, "warnings": result.note}
    if result.report is None:
        return row
    p = properties(result.report, mhz)
    row.update({"smiles": result.report["smiles"], "label": result.report["label"],
                "magnetically_inequivalent": "true" if p["magnetically_inequivalent"] else "false",
                "diastereotopic_sets": p["diastereotopic_sets"],
                "second_order_fragments": p["second_order_fragments"],
                "first_order_above_mhz": "" if p["first_order_above_mhz"] is None else p["first_order_above_mhz"],
                "warnings": " | ".join(result.report["warnings"])})
    for n in nuclei:
        row[f"sets_{n}"] = p["sets"].get(n, 0)
    return row


class JsonlWriter:
    """One JSON object a line, flushed after each record."""

    def __init__(self, stream, nuclei=(), mhz=400.0):
        self.stream = stream

    def write(self, result: Result) -> None:
        self.stream.write(json.dumps(record_dict(result), ensure_ascii=False) + "\n")
        self.stream.flush()


class CsvWriter:
    """A header, then one row per record (reactions: a row per species and a summary row)."""

    def __init__(self, stream, nuclei=("1H", "19F", "31P"), mhz=400.0):
        self.stream, self.nuclei, self.mhz = stream, tuple(nuclei), mhz
        self.writer = csv.DictWriter(stream, fieldnames=csv_columns(self.nuclei), lineterminator="\n",
                                     extrasaction="ignore")
        self.writer.writeheader()
        stream.flush()

    def write(self, result: Result) -> None:
        for row in flat_rows(result, self.nuclei, self.mhz):
            self.writer.writerow(row)
        self.stream.flush()


class SdfWriter:
    """The input records with result data items (tags EQV_<column>) appended; SMILES input gets 2D
    coordinates; each species of a reaction is its own record tagged with its role."""

    def __init__(self, stream, nuclei=("1H", "19F", "31P"), mhz=400.0):
        self.stream, self.nuclei, self.mhz = stream, tuple(nuclei), mhz

    def write(self, result: Result) -> None:
        if result.kind == "reaction":
            summary = {k: v for k, v in next(r for r in flat_rows(result, self.nuclei, self.mhz)
                                             if r["kind"] == "reaction").items()}
            parts = []
            for s in result.species:
                row = _flat(s, self.nuclei, self.mhz, kind=s.role)
                row["reaction"] = result.text
                row["changes"] = summary["changes"]
                row["reaction_error"] = result.error
                parts.append(_sdf_block(s, row))
            self.stream.write("".join(parts))
        else:
            self.stream.write(_sdf_block(result, _flat(result, self.nuclei, self.mhz, result.kind)))
        self.stream.flush()


def _sdf_block(result: Result, row: dict) -> str:
    if result.kind == "mol" and "M  END" in result.text:
        block = result.text if result.text.endswith("\n") else result.text + "\n"
        block = block.replace("\r\n", "\n")
    else:
        block = _molblock(result.text, result.name)
    tags = []
    for key, value in row.items():
        if key in ("smiles",) or value is None or value == "":
            continue
        text = " ".join(str(value).split())
        tags.append(f">  <EQV_{key.upper()}>\n{text}\n\n")
    tags.append(f">  <EQV_CAUTION>\n{CAUTION}\n\n")
    return block + "".join(tags) + "$$$$\n"


def _molblock(smiles: str, name: str) -> str:
    """A MOL block (2D coordinates, input atom order) for a SMILES record; an empty one if unreadable."""
    mol = Chem.MolFromSmiles(smiles.strip()) if smiles.strip() and ">" not in smiles else None
    if mol is None:
        mol = Chem.Mol()
    else:
        try:
            rdDepictor.Compute2DCoords(mol)
        except Exception:
            pass
    mol.SetProp("_Name", " ".join(name.split())[:80])
    return Chem.MolToMolBlock(mol)


WRITERS = {"jsonl": JsonlWriter, "csv": CsvWriter, "sdf": SdfWriter}
