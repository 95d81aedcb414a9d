"""The invented axisymmetric billet heater the benchmarks share (one case text).

A steel billet (radius 40 mm, height 200 mm, 1 MS/m: hot, non-magnetic unless a
permeability is given) in a 24-turn stranded copper coil (inner radius 55 mm, 12 mm by
240 mm) at 800 A, in a 300 mm by 600 mm box; P2. ``bench_frequency_sweep.py``,
``bench_outputs.py`` and ``bench_scale.py`` take it from here.
"""

from __future__ import annotations

TEMPLATE = """\
format = 1
[case]
name = "{name}"
[model]
geometry = "axisymmetric"
length_unit = "mm"
order = 2
[material.hot-steel]
conductivity = "1 MS/m"
{permeability}[[region]]
name = "billet"
material = "hot-steel"
shape = "rectangle"
corner = [0, -100]
size = [40, 200]
[[region]]
name = "coil"
material = "copper"
shape = "rectangle"
corner = [55, -120]
size = [12, 240]
[domain]
shape = "rectangle"
corner = [0, -300]
size = [300, 600]
[[source]]
name = "coil"
kind = "stranded"
regions = ["coil"]
turns = 24
current = "800 A"
[study]
kind = "harmonic"
frequency = "{frequency}"
[mesh]
{mesh}
"""


def billet_heater(name: str, frequency: str, mesh: str,
                  relative_permeability: float | None = None, extra: str = "") -> str:
    """The case text: ``frequency`` as the case file writes it ("10 kHz"), ``mesh`` the
    body of the [mesh] table, ``extra`` tables appended at the end ([[line]], [output])."""
    permeability = ("" if relative_permeability is None
                    else f"relative_permeability = {relative_permeability:g}\n")
    return TEMPLATE.format(name=name, frequency=frequency, mesh=mesh,
                           permeability=permeability) + extra
