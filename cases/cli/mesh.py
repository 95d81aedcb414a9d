"""``whorl mesh CASE``: mesh only; write the mesh, a picture, counts and quality."""

from __future__ import annotations

from whorl.cases import model
from whorl.cases.cli.common import add_case_args, add_limit_args
from whorl.cases.limits import check_mesh_estimate
from whorl.cases.loader import load_case
from whorl.cases.meshing import mesh_with_limit
from whorl.cases.output import output_key, output_root, staged_folder
from whorl.cases.parameters import parse_set_args
from whorl.cases.progress import StageReporter
from whorl.meshes.msh import write_msh
from whorl.postprocess.meshplot import plot_mesh

HELP = ("mesh a case only: mesh.msh (gmsh 4.1 binary, case length unit), mesh.png and "
        "mesh-regions.png (the regions close up, named), counts, quality")


def add_args(parser) -> None:
    add_case_args(parser)
    add_limit_args(parser)


def handle(args) -> int:
    case = load_case(args.case, parse_set_args(args.overrides), args.max_points)
    geometry = model.sized_geometry(case)
    check_mesh_estimate(case, args.max_elements, geometry)
    root = output_root(case, args.out)
    final = root / case.name
    with staged_folder(final, output_key(args.out), "mesh") as tmp:
        tagged = mesh_with_limit(geometry, StageReporter(quiet=args.quiet),
                                 args.mesh_time_limit)
        write_msh(tagged, tmp / "mesh.msh")
        plot_mesh(tagged, tmp / "mesh.png", title=case.title or case.name)
        plot_mesh(tagged, tmp / "mesh-regions.png", title=case.title or case.name, zoom=True)
    info = tagged.info
    print(f"{case.name}: {info['nodes']} nodes, {info['elements']} triangles, "
          f"meshed in {info['time_s']:.2f} s")
    print(f"  quality (radius ratio, 1 = equilateral): least {info['quality_min']:.3f}, "
          f"mean {info['quality_mean']:.3f}")
    print(f"  {'region':<20} {'elements':>9} {'surface size':>14}")
    sizes = info.get("surface_sizes", {})
    for name, count in info["elements_per_region"].items():
        size = sizes.get(name)
        shown = f"{size:.4g} {case.length_unit}" if size is not None else "-"
        print(f"  {name:<20} {count:>9} {shown:>14}")
    print(f"written: {final / 'mesh.msh'}, {final / 'mesh.png'}, {final / 'mesh-regions.png'}")
    return 0
