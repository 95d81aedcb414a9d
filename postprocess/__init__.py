"""whorl.postprocess."""
