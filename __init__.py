"""whorl: a 2D finite-element eddy-current and induction solver.

Subpackages, lowest layer first (a lower layer never imports a higher one):

- :mod:`whorl.meshes`      geometry -> gmsh -> a tagged scikit-fem mesh
- :mod:`whorl.solver`      materials, sources, formulations, linear algebra
- :mod:`whorl.postprocess` region totals, impedance, probes, exports, plots
- :mod:`whorl.cases`       case files, parameters and units, runs, command line
"""

from importlib.metadata import PackageNotFoundError, version

try:
    __version__ = version("whorl")
except PackageNotFoundError:  # running from a source tree that is not installed
    __version__ = "0+unknown"
