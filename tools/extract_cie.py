#!/usr/bin/env python3
"""Write Stackwise's colorimetric tables (assets/cie/cie015_5nm.csv).

The data are the CIE 015 tables as held by the PyPI package `colour-science`
(version 0.4.7, `pip install colour-science==0.4.7`):

* CIE 1931 2° and CIE 1964 10° standard observers: the CIE 1 nm tables sampled at
  every 5 nm (no interpolation: the 5 nm CIE tables are these rows);
* CIE standard illuminant D65 and CIE standard illuminant A: the CIE 5 nm tables
  (relative spectral power, 100 at 560 nm).

Rows run 360–780 nm in 5 nm steps (85 rows): the range over which Stackwise sums
(the CIE 015 / ASTM E308 practice range 360–780 nm). Numbers are written with
`repr`, so the file holds exactly the package's float values.

Usage: python3 tools/extract_cie.py [output-file]
"""

from __future__ import annotations

import sys
from pathlib import Path

import colour

OUT = Path(sys.argv[1]) if len(sys.argv) > 1 else Path("assets/cie/cie015_5nm.csv")

cmf2 = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]
cmf10 = colour.MSDS_CMFS["CIE 1964 10 Degree Standard Observer"]
d65 = colour.SDS_ILLUMINANTS["D65"]
a = colour.SDS_ILLUMINANTS["A"]


def num(x: float) -> str:
    s = repr(float(x))
    return s[:-2] if s.endswith(".0") else s


lines = [
    "# CIE 015 colorimetric tables, 360-780 nm in 5 nm steps.",
    "# x2,y2,z2: CIE 1931 2 degree standard observer (CIE 1 nm table at 5 nm rows).",
    "# x10,y10,z10: CIE 1964 10 degree standard observer (CIE 1 nm table at 5 nm rows).",
    "# D65, A: CIE standard illuminants D65 and A, relative spectral power (100 at 560 nm).",
    f"# Source: CIE 015:2018 Colorimetry tables as distributed in colour-science {colour.__version__}",
    "# (colour.MSDS_CMFS, colour.SDS_ILLUMINANTS); written by tools/extract_cie.py.",
    "lambda_nm,x2,y2,z2,x10,y10,z10,D65,A",
]


def row_at(data, wl: int) -> list[float]:
    """The stored row at exactly `wl` (no interpolation)."""
    (hits,) = (data.wavelengths == wl).nonzero()
    assert len(hits) == 1, f"no row at {wl} nm"
    v = data.values[hits[0]]
    return list(v) if hasattr(v, "__len__") else [v]


for wl in range(360, 781, 5):
    row = [*row_at(cmf2, wl), *row_at(cmf10, wl), *row_at(d65, wl), *row_at(a, wl)]
    lines.append(",".join([str(wl)] + [num(v) for v in row]))
OUT.parent.mkdir(parents=True, exist_ok=True)
OUT.write_text("\n".join(lines) + "\n")
print(f"wrote {OUT} ({len(lines) - 7} rows)")
