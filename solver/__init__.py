"""Materials, sources, formulations (planar, axisymmetric), assembly and solution."""

from whorl.solver.boundary import AppliedFieldSide, FluxNormal, FluxParallel, Open, Potential
from whorl.solver.circuits import Branch, branches
from whorl.solver.errors import SolveError
from whorl.solver.harmonic import solve_harmonic, solve_system
from whorl.solver.materials import BUILTIN, MU0, Material, skin_depth
from whorl.solver.problem import Problem
from whorl.solver.solution import Solution
from whorl.solver.sources import AppliedField, Massive, Shorted, Stranded
from whorl.solver.system import System, assemble

__all__ = [
    "AppliedField", "AppliedFieldSide", "BUILTIN", "Branch", "FluxNormal", "FluxParallel",
    "MU0", "Massive", "Material", "Open", "Potential", "Problem", "Shorted", "Solution",
    "SolveError", "Stranded", "System", "assemble", "branches", "skin_depth",
    "solve_harmonic", "solve_system",
]
