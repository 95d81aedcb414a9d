"""whorl.meshes: geometry -> gmsh -> a tagged scikit-fem mesh, sizing rules, msh files."""

from whorl.meshes.build import build_mesh
from whorl.meshes.errors import MeshError
from whorl.meshes.geometry import DomainSpec, Geometry, MeshOptions, RegionSpec
from whorl.meshes.msh import read_msh, write_msh
from whorl.meshes.shapes import SHAPES, Circle, Polygon, Rectangle, Ring, register_shape
from whorl.meshes.sizing import SizingPlan, sizing_plan, skin_depth_size
from whorl.meshes.tagged import TaggedMesh

__all__ = [
    "SHAPES",
    "Circle",
    "DomainSpec",
    "Geometry",
    "MeshError",
    "MeshOptions",
    "Polygon",
    "Rectangle",
    "RegionSpec",
    "Ring",
    "SizingPlan",
    "TaggedMesh",
    "build_mesh",
    "read_msh",
    "register_shape",
    "sizing_plan",
    "skin_depth_size",
    "write_msh",
]
