"""whorl.cases."""
