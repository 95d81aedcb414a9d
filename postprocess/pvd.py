"""A collection file (VTK's PVD XML) that lists field snapshots by time, so an external
viewer opens them as one time series. Writes to the path it is given."""

from __future__ import annotations

from pathlib import Path
from xml.sax.saxutils import quoteattr


def write_pvd(entries, path) -> Path:
    """``entries``: (time in s, path of a VTU file) pairs; paths are written relative to
    the collection file's folder."""
    path = Path(path)
    lines = ['<?xml version="1.0"?>',
             '<VTKFile type="Collection" version="0.1" byte_order="LittleEndian">',
             "  <Collection>"]
    for time_s, vtu in entries:
        rel = Path(vtu).relative_to(path.parent).as_posix()
        lines.append(f'    <DataSet timestep="{time_s:.9g}" group="" part="0" '
                     f'file={quoteattr(rel)}/>')
    lines += ["  </Collection>", "</VTKFile>", ""]
    path.write_text("\n".join(lines), encoding="utf-8")
    return path
