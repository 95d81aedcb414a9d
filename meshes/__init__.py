"""whorl.meshes."""
