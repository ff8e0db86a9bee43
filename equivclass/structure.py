"""Structure input: SMILES, MOL V2000/V3000 or the first SDF record, as text, a file path or '-' (stdin).

The parsed molecule is sanitised, keeps the isotopes written in the input, and has explicit hydrogens
appended after the heavy atoms (heavy atoms keep the input order), so every atom index printed by the
program refers to this molecule. Multi-component inputs (salts) are one structure.
"""
from __future__ import annotations

import os
import re
import sys
from dataclasses import dataclass

from rdkit import Chem, RDLogger
from .atoms import atom_list, bond_list

from .errors import InputError

RDLogger.DisableLog("rdApp.*")

DEFAULT_MAX_HEAVY_ATOMS = 300
_MAX_TEXT_BYTES = 20_000_000


@dataclass(frozen=True)
class Structure:
    """A parsed structure: `mol` has explicit H appended after the heavy atoms."""

    name: str
    mol: Chem.Mol
    n_heavy: int
    input_text: str
    notes: tuple = ()       # facts about the input the report should repeat (radicals, SDF records)


def _looks_like_molblock(text: str) -> bool:
    return "M  END" in text or "V2000" in text or "V3000" in text


def _check_v2000_counts(text: str, name: str) -> None:
    """A V2000 counts line states how many atom and bond lines follow; a block that disagrees is refused."""
    lines = text.splitlines()
    for i, line in enumerate(lines):
        if line.rstrip().endswith("V2000"):
            try:
                n_atoms, n_bonds = int(line[0:3]), int(line[3:6])
            except ValueError:
                raise InputError(f"{name}: MOL counts line is malformed: {line.strip()!r}") from None
            body = lines[i + 1:]
            end = next((k for k, ln in enumerate(body) if ln.startswith("M  ") or ln.startswith("$$$$")),
                       len(body))
            found = end
            if found != n_atoms + n_bonds:
                raise InputError(
                    f"{name}: MOL counts line declares {n_atoms} atoms and {n_bonds} bonds "
                    f"but the block has {found} atom/bond lines")
            return


def _first_sdf_record(text: str) -> str:
    return text.split("$$$$", 1)[0] if "$$$$" in text else text


def _parse_text(text: str, name: str) -> Chem.Mol:
    if "\x00" in text:
        raise InputError(f"{name}: input is binary data, not a structure")
    stripped = text.strip()
    if not stripped:
        raise InputError(f"{name}: empty input")
    if _looks_like_molblock(text):
        block = _first_sdf_record(text)
        _check_v2000_counts(block, name)
        mol = Chem.MolFromMolBlock(block, sanitize=True, removeHs=False)
        if mol is not None:
            return _sanitize(mol, name)
        raw = Chem.MolFromMolBlock(block, sanitize=False, removeHs=False)
        if raw is None:
            raise InputError(f"{name}: MOL block could not be read")
        return _sanitize(raw, name)
    first = stripped.splitlines()[0].strip()
    if len(stripped.splitlines()) > 1:
        raise InputError(f"{name}: several lines of text that are not a MOL block; give one SMILES")
    smiles = first.split()[0]
    if ">" in smiles:
        raise InputError(f"{name}: reaction SMILES; analyse reactions with 'equivclass batch'")
    if not re.fullmatch(r"[A-Za-z0-9@+\-\[\]\(\)=#$%/\\.:*~&!,;^]+", smiles):
        raise InputError(f"{name}: not a SMILES string: {smiles[:40]!r}")
    mol = Chem.MolFromSmiles(smiles)
    if mol is not None:
        return _sanitize(mol, name)
    raw = Chem.MolFromSmiles(smiles, sanitize=False)
    if raw is None:
        raise InputError(f"{name}: SMILES could not be parsed: {smiles[:80]!r}")
    return _sanitize(raw, name)


def _sanitize(mol: Chem.Mol, name: str) -> Chem.Mol:
    if mol.GetNumAtoms() == 0:
        raise InputError(f"{name}: structure has no atoms")
    try:
        Chem.SanitizeMol(mol)
    except Chem.AtomValenceException as exc:
        raise InputError(f"{name}: valence error: {_one_line(exc)}") from None
    except Chem.KekulizeException as exc:
        raise InputError(f"{name}: aromatic system cannot be kekulised: {_one_line(exc)}") from None
    except Exception as exc:  # any other sanitisation fault of RDKit
        raise InputError(f"{name}: structure is not chemically valid: {_one_line(exc)}") from None
    Chem.AssignStereochemistry(mol, cleanIt=True, force=True)
    table = Chem.GetPeriodicTable()
    for atom in atom_list(mol):
        if atom.GetAtomicNum() == 0:
            raise InputError(f"{name}: dummy or query atom (*) at atom {atom.GetIdx()}; give a real structure")
        mass = atom.GetIsotope()
        if mass and table.GetMassForIsotope(atom.GetAtomicNum(), mass) == 0:
            raise InputError(f"{name}: atom {atom.GetIdx()} is labelled with an unknown isotope "
                             f"{mass}{atom.GetSymbol()}")
    return mol


def _one_line(exc: Exception) -> str:
    return " ".join(str(exc).split())[:200]


def _read_source(source: str) -> tuple[str, str]:
    """Return (text, record name) for text, a file path or '-' meaning standard input."""
    if source == "-":
        data = sys.stdin.buffer.read(_MAX_TEXT_BYTES + 1)
        return _decode(data, "stdin"), "stdin"
    if "\n" not in source and len(source) < 4096:
        candidate = source.strip()
        if os.path.isfile(candidate):
            with open(candidate, "rb") as fh:
                data = fh.read(_MAX_TEXT_BYTES + 1)
            return _decode(data, candidate), os.path.basename(candidate)
        if re.search(r"\.(mol|sdf|sd|smi|smiles|txt|mdl|csv)$", candidate, re.I) or \
                candidate.startswith(("./", "~/", "../")):
            raise InputError(f"{candidate}: file not found")
    return source, "input"


def _decode(data: bytes, name: str) -> str:
    if len(data) > _MAX_TEXT_BYTES:
        raise InputError(f"{name}: input larger than {_MAX_TEXT_BYTES // 1_000_000} MB")
    if b"\x00" in data:
        raise InputError(f"{name}: input is binary data, not a structure")
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError:
        raise InputError(f"{name}: input is not UTF-8 text") from None


def from_mol(mol: Chem.Mol, name: str = "input", max_heavy_atoms: int = DEFAULT_MAX_HEAVY_ATOMS,
             input_text: str = "") -> Structure:
    """Build a Structure from an RDKit molecule (hydrogens it already holds are moved behind the heavy atoms)."""
    if mol is None:
        raise InputError(f"{name}: no molecule")
    mol = Chem.Mol(mol)
    if any(a.GetAtomicNum() == 1 for a in atom_list(mol)):
        try:
            mol = Chem.RemoveHs(mol, sanitize=False, implicitOnly=False)
        except Exception as exc:
            raise InputError(f"{name}: hydrogens could not be handled: {_one_line(exc)}") from None
    mol = _sanitize(mol, name)
    heavy = mol.GetNumAtoms()
    if heavy > max_heavy_atoms:
        raise InputError(f"{name}: {heavy} heavy atoms exceeds the limit of {max_heavy_atoms} "
                         f"(raise it with --max-atoms)")
    _stereo_bonds_to_cis_trans(mol)
    molh = Chem.AddHs(mol, explicitOnly=False, addCoords=mol.GetNumConformers() > 0)
    if not input_text:
        input_text = Chem.MolToSmiles(mol)
    notes = []
    radicals = [a.GetIdx() for a in atom_list(mol) if a.GetNumRadicalElectrons()]
    if radicals:
        notes.append("unpaired electrons at atom(s) " + ",".join(map(str, radicals)) +
                     ": analysed as a closed shell; a radical's own spectrum is broadened or shifted "
                     "(check the drawing if no radical was meant)")
    n_records = input_text.count("$$$$")
    if n_records > 1 and "M  END" in input_text:
        notes.append(f"SDF holds {n_records} records: the first was analysed (use 'equivclass batch' for all)")
    return Structure(name=name, mol=molh, n_heavy=heavy, input_text=input_text, notes=tuple(notes))


def _stereo_bonds_to_cis_trans(mol: Chem.Mol) -> None:
    """Express double-bond geometry as CIS/TRANS relative to the bond's stereo atoms (not CIP E/Z)."""
    for bond in bond_list(mol):
        st = bond.GetStereo()
        if st in (Chem.BondStereo.STEREOE, Chem.BondStereo.STEREOZ):
            atoms = list(bond.GetStereoAtoms())
            if len(atoms) != 2:
                continue
            # RDKit reports E/Z with the CIP-highest neighbours as stereo atoms (checked against
            # embedded geometry in tests/test_stereo.py).
            want_cis = st == Chem.BondStereo.STEREOZ
            bond.SetStereo(Chem.BondStereo.STEREOCIS if want_cis else Chem.BondStereo.STEREOTRANS)


def read_structure(source, name: str | None = None,
                   max_heavy_atoms: int = DEFAULT_MAX_HEAVY_ATOMS) -> Structure:
    """Parse a structure given as an RDKit Mol, SMILES or MOL/SDF text, a file path, or '-' for stdin."""
    if isinstance(source, Chem.Mol):
        return from_mol(source, name or (source.GetProp("_Name") if source.HasProp("_Name") else "")
                        or "input", max_heavy_atoms)
    if not isinstance(source, str):
        raise InputError(f"{name or 'input'}: expected a SMILES, MOL block, file path or RDKit Mol, "
                         f"got {type(source).__name__}")
    text, label = _read_source(source)
    label = name or label
    mol = _parse_text(text, label)
    return from_mol(mol, label, max_heavy_atoms, input_text=text.strip())
