"""whorl.solver."""
