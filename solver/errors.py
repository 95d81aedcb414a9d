"""Errors of the solver layer."""


class SolveError(RuntimeError):
    """A solve failed; the message says why (for instance which region floats)."""
