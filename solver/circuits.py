"""Massive conductors as circuit branches.

A *branch* is a set of conductor regions that share one voltage unknown u
(V/m in planar models, V/rad in axisymmetric ones) and so carry one current
between them. A massive source in series makes one branch per region; in
parallel one branch for its go regions and one for its return regions. In
planar models every conductor in no source is a branch of its own whose
current is zero (open ends), unless a ``Shorted`` group joins several into
one branch. In axisymmetric models a conductor in no source is a closed ring:
it needs no unknown (u = 0).
"""

from __future__ import annotations

from dataclasses import dataclass

from whorl.solver.errors import SolveError
from whorl.solver.sources import Massive, Stranded


@dataclass(frozen=True)
class Branch:
    """Regions that share one voltage unknown.

    ``source`` names the massive source feeding it (None for a free conductor
    group, whose current is zero); ``sign`` is +1 for go and -1 for return.
    """

    name: str
    regions: tuple[str, ...]
    source: str | None = None
    sign: int = 1


def stranded_regions(problem) -> set[str]:
    return {r for s in problem.sources if isinstance(s, Stranded)
            for r in (*s.regions, *s.return_regions)}


def eddy_regions(problem) -> list[str]:
    """Regions where eddy currents flow: conducting and not a stranded winding."""
    wound = stranded_regions(problem)
    return [r for r in problem.mesh.regions
            if problem.materials[r].conductivity > 0 and r not in wound]


def branches(problem) -> tuple[Branch, ...]:
    """Every branch of the problem, sources first, in a stable order."""
    out: list[Branch] = []
    fed: set[str] = set()
    for s in problem.sources:
        if not isinstance(s, Massive):
            continue
        for sign, regions in ((1, s.regions), (-1, s.return_regions)):
            if not regions:
                continue
            for r in regions:
                if problem.materials[r].conductivity <= 0:
                    raise SolveError(f"massive source {s.name!r}: region {r!r} does not conduct "
                                     "(conductivity 0)")
            fed.update(regions)
            if s.connection == "series":
                out += [Branch(f"{s.name}:{r}", (r,), s.name, sign) for r in regions]
            else:
                tag = "go" if sign > 0 else "return"
                out.append(Branch(f"{s.name}:{tag}", tuple(regions), s.name, sign))
    if problem.axisymmetric:
        return tuple(out)
    free = [r for r in eddy_regions(problem) if r not in fed]
    grouped: set[str] = set()
    for i, group in enumerate(problem.shorted, start=1):
        members = tuple(r for r in group.regions if r in free)
        if members:
            out.append(Branch(f"shorted.{i}", members))
            grouped.update(members)
    out += [Branch(r, (r,)) for r in free if r not in grouped]
    return tuple(out)
