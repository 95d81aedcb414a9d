"""Errors of the meshing layer."""


class MeshError(RuntimeError):
    """Meshing failed; the message names the region or side involved."""
