"""Physical constants (SI)."""

import math

MU0 = 4e-7 * math.pi
"""Permeability of free space in H/m (the classical defined value; the 2019 SI
value differs by under 1e-9 relative)."""
