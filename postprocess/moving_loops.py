r"""Moving loops: the EMF in the loop's own frame, two ways (Faraday's law).

A loop drawn where it is at this moment and moving at velocity v sees, in its
own frame,

- ``emf_v`` = -turns (d/dt + v . grad) flux = -turns (j omega flux + v . grad flux),
  the rate of change of the flux through the moving contour (grad flux: how the flux
  of one turn changes when the whole loop is displaced), and
- ``emf_from_e_v`` = turns times the circulation of E + v x B around the contour.

The two agree: Faraday's law makes no difference between a moving loop and a changing
field (the flux rule; e.g. R. P. Feynman, R. B. Leighton and M. Sands, *The Feynman
Lectures on Physics*, vol. II, sec. 17-1, 1964). With A the potential at the
contour:

- planar, sides s and e of length depth: flux = depth (A(s) - A(e)),
  v . grad flux = depth (v . grad A(s) - v . grad A(e)), and (v x B)_z = -v . grad A;
- axisymmetric circle of radius r: flux = 2 pi r A, d flux/dr = 2 pi (A + r dA/dr),
  d flux/dz = 2 pi r dA/dz, and (v x B)_phi = v_z B_r - v_r B_z.

Orientation as in :mod:`.loops`. A loop at rest reports exactly as before.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from whorl.postprocess.probes import probe


def flux_gradient_and_motional_emf(solution, loop: dict, velocity):
    """Per turn: v . grad(flux) (Wb/s) and the circulation of v x B (V) for ``loop``
    (metres, as :func:`whorl.postprocess.records.loop_result` takes it)."""
    vx, vy = velocity
    if solution.problem.axisymmetric:
        r, z = loop["at"]
        p = probe(solution, np.array([[r], [z]]))
        a, g, b = p.a[0], p.grad_a[:, 0], p.b[:, 0]
        rate = 2 * np.pi * (vx * (a + r * g[0]) + vy * r * g[1])
        circulation = 2 * np.pi * r * (vy * b[0] - vx * b[1])
        return complex(rate), complex(circulation)
    depth = solution.problem.depth_m
    s, e = loop["start"], loop["end"]
    p = probe(solution, np.array([[s[0], e[0]], [s[1], e[1]]]))
    along = vx * p.grad_a[0] + vy * p.grad_a[1]
    motional = vx * p.b[1] - vy * p.b[0]
    return complex(depth * (along[0] - along[1])), complex(depth * (motional[0] - motional[1]))


def moving_loop(solution, result, loop: dict):
    """``result`` (a loop at rest, :class:`whorl.postprocess.loops.LoopResult`) seen from
    a loop moving at ``loop["velocity"]`` (m/s)."""
    rate, circulation = flux_gradient_and_motional_emf(solution, loop, loop["velocity"])
    turns = result.turns
    return replace(result, emf_v=result.emf_v - turns * rate,
                   emf_from_e_v=result.emf_from_e_v + turns * circulation)
