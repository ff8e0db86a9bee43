"""The data tables of `data/` (installed as `equivclass.data`): CSV files whose '#' lines name sources."""
from __future__ import annotations

import csv
import functools
from importlib import resources


@functools.lru_cache(maxsize=None)
def table_rows(name: str) -> tuple[dict, ...]:
    """Rows of data/NAME as dictionaries keyed by the header, comment and blank lines skipped."""
    text = resources.files("equivclass.data").joinpath(name).read_text(encoding="utf-8")
    lines = [ln for ln in text.splitlines() if ln.strip() and not ln.lstrip().startswith("#")]
    return tuple(csv.DictReader(lines))
