"""Errors the program reports to the user as one line (never a traceback)."""


class InputError(ValueError):
    """A structure or option the program cannot analyse; the message names the record and the fault."""
