"""The drawing of the demo ``cases/examples/shoulder-hardening.dxf``, made with ezdxf.

An invented part: a shaft stepping down from 40 mm to 24 mm diameter with a 4 mm fillet
at the shoulder (layer SHAFT, the half section r >= 0 of an axisymmetric model), and four
turns of 8 mm square copper tube with 2 mm corner radii and a 5 mm round water bore
(layer COIL). Millimetres ($INSUNITS 4). Run this module to write the file again.
"""

import math
import sys
from pathlib import Path

import ezdxf

QUARTER = math.tan(math.radians(90) / 4)  # bulge of a quarter circle


def shaft(msp):
    # counter-clockwise from the axis; the fillet is a concave quarter turn (bulge < 0)
    points = [(0, -60, 0), (20, -60, 0), (20, 0, 0), (16, 0, -QUARTER), (12, 4, 0),
              (12, 50, 0), (0, 50, 0)]
    msp.add_lwpolyline(points, format="xyb", close=True, dxfattribs={"layer": "SHAFT"})


def tube(msp, r, z, side=8.0, corner=2.0, bore=2.5):
    h, c = side / 2, corner
    points = [(r - h + c, z - h, 0), (r + h - c, z - h, QUARTER), (r + h, z - h + c, 0),
              (r + h, z + h - c, QUARTER), (r + h - c, z + h, 0), (r - h + c, z + h, QUARTER),
              (r - h, z + h - c, 0), (r - h, z - h + c, QUARTER)]
    msp.add_lwpolyline(points, format="xyb", close=True, dxfattribs={"layer": "COIL"})
    msp.add_circle((r, z), bore, dxfattribs={"layer": "COIL"})


def make(path):
    doc = ezdxf.new("R2010")
    doc.header["$INSUNITS"] = 4
    msp = doc.modelspace()
    shaft(msp)
    for k in range(4):
        tube(msp, 27.0, -12.0 + 10.0 * k)
    doc.saveas(path)


if __name__ == "__main__":
    here = Path(__file__).resolve().parents[2] / "cases" / "examples"
    make(sys.argv[1] if len(sys.argv) > 1 else here / "shoulder-hardening.dxf")
