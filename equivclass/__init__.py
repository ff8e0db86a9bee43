"""equivclass: NMR spin systems predicted from a structure (chemical and magnetic equivalence, Pople labels)."""
from .analysis import analyze, analyze_each_stereoisomer
from .errors import InputError
from .report import Report

__all__ = ["analyze", "analyze_each_stereoisomer", "InputError", "Report"]
__version__ = "0.1.0"
