#!/usr/bin/env python3
"""Regenerate lampwright's data/cie tables from Debian's colord-data and the
3-decimal CIE 13.3 test colour samples.

Usage: tools/import_cie_tables.py [--colord DIR] [--tcs CSV] [--out DIR]

Sources (each output file repeats its own in its '#' header):
  colord-data  /usr/share/colord/cmf/CIE1931-2deg-XYZ.cmf, CIE1964-10deg-XYZ.cmf,
               ref/CIE-1986-daylight-SPD.cmf, ref/CIE-TCS.sp, illuminant/CIE-F*.sp
  CIE 13.3-1995 TCS01-TCS14 at 3 decimals, 380-780 nm (cie133_tcs_380_780.csv)
  CIE 224:2017 CES01-CES99, 380-780 nm at 1 nm (cie224_ces99_380_780.csv), copied unchanged
Corrections: colord stores the F-series as CIE value / 100 and has six values that
differ from CIE 15:2004 Table T.6; the CIE values are applied below.
"""
import argparse
import csv
import os
import sys

# CIE 15:2004 Table T.6 values (not divided by 100) where colord-data differs.
F_SERIES_ERRATA = {
    ("F5", 690): 1.48, ("F6", 625): 8.95, ("F9", 530): 10.78,
    ("F10", 385): 0.80, ("F10", 605): 8.31, ("F12", 390): 0.40,
}


def read_colord(path):
    """Read a colord CGATS-like spectral file: returns (wavelengths, [(id, values)])."""
    with open(path) as f:
        lines = [ln.rstrip("\n") for ln in f]
    start = float(next(l for l in lines if l.startswith("SPECTRAL_START_NM")).split()[1])
    end = float(next(l for l in lines if l.startswith("SPECTRAL_END_NM")).split()[1])
    bands = int(next(l for l in lines if l.startswith("SPECTRAL_BANDS")).split()[1])
    step = (end - start) / (bands - 1)
    wl = [round(start + i * step) for i in range(bands)]
    body = lines[lines.index("BEGIN_DATA") + 1: lines.index("END_DATA")]
    rows = []
    for ln in body:
        parts = ln.split()
        if not parts:
            continue
        if len(parts) == bands + 1:
            rows.append((parts[0], [float(v) for v in parts[1:]]))
        elif len(parts) == bands:
            rows.append((None, [float(v) for v in parts]))
        else:
            sys.exit(f"{path}: a data row has {len(parts)} fields, expected {bands}")
    return wl, rows


def fmt(v):
    return ("%.10g" % v)


def write_table(path, header_lines, columns, wl, series):
    with open(path, "w", newline="") as f:
        for h in header_lines:
            f.write("# " + h + "\n")
        f.write(",".join(["wavelength_nm"] + columns) + "\n")
        for i, w in enumerate(wl):
            f.write(",".join([str(w)] + [fmt(s[i]) for s in series]) + "\n")
    print("wrote", path)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--colord", default="/usr/share/colord")
    ap.add_argument("--tcs", default=os.path.join(os.path.dirname(__file__), "..", "..",
                                                  "shared", "cie-tables", "cie133_tcs_380_780.csv"))
    ap.add_argument("--out", default=os.path.join(os.path.dirname(__file__), "..", "data", "cie"))
    ap.add_argument("--ces", default=os.path.join(os.path.dirname(__file__), "..", "..",
                                                  "shared", "cie-tables", "cie224_ces99_380_780.csv"))
    a = ap.parse_args()
    c = a.colord
    os.makedirs(a.out, exist_ok=True)

    for name, fname, std in [
        ("cie1931_2deg_cmf.csv", "cmf/CIE1931-2deg-XYZ.cmf",
         "CIE 1931 2-degree standard colorimetric observer, CIE 15:2004 Table T.4 (5 nm)"),
        ("cie1964_10deg_cmf.csv", "cmf/CIE1964-10deg-XYZ.cmf",
         "CIE 1964 10-degree standard colorimetric observer, CIE 15:2004 Table T.5 (5 nm)"),
    ]:
        wl, rows = read_colord(os.path.join(c, fname))
        write_table(os.path.join(a.out, name),
                    [std, f"Read from Debian package colord-data, file /usr/share/colord/{fname}",
                     "by tools/import_cie_tables.py; values unchanged."],
                    ["xbar", "ybar", "zbar"], wl, [r[1] for r in rows])

    wl, rows = read_colord(os.path.join(c, "ref/CIE-1986-daylight-SPD.cmf"))
    write_table(os.path.join(a.out, "cie_daylight_components.csv"),
                ["CIE daylight components S0, S1, S2, CIE 15:2004 Table T.2 (10 nm table; 5 nm",
                 "midpoints linearly interpolated as in colord). Read from Debian package colord-data,",
                 "file /usr/share/colord/ref/CIE-1986-daylight-SPD.cmf by tools/import_cie_tables.py."],
                ["S0", "S1", "S2"], wl, [r[1] for r in rows])

    f_wl, f_series = None, []
    for n in range(1, 13):
        wl, rows = read_colord(os.path.join(c, f"illuminant/CIE-F{n}.sp"))
        vals = [v * 100.0 for v in rows[0][1]]
        for (lamp, w), v in F_SERIES_ERRATA.items():
            if lamp == f"F{n}":
                vals[wl.index(w)] = v
        f_wl = wl
        f_series.append([round(v, 4) for v in vals])
    write_table(os.path.join(a.out, "cie_fl_series.csv"),
                ["CIE fluorescent illuminants FL1-FL12, CIE 15:2004 Table T.6 (relative SPD, 5 nm).",
                 "Read from Debian package colord-data, files /usr/share/colord/illuminant/CIE-F1.sp ..",
                 "CIE-F12.sp (stored there as CIE value / 100, multiplied back by 100), with six",
                 "values corrected to CIE 15:2004 Table T.6: F5 690 nm 1.48, F6 625 nm 8.95,",
                 "F9 530 nm 10.78, F10 385 nm 0.80, F10 605 nm 8.31, F12 390 nm 0.40."],
                [f"FL{n}" for n in range(1, 13)], f_wl, f_series)

    wl, rows = read_colord(os.path.join(c, "ref/CIE-TCS.sp"))
    series = {sid: list(v) for sid, v in rows}
    with open(a.tcs) as f:
        r = csv.DictReader(f)
        for row in r:
            w = int(float(row["wavelength_nm"]))
            for k, v in row.items():
                if k != "wavelength_nm":
                    series[k][wl.index(w)] = float(v)
    ids = [f"TCS{n:02d}" for n in range(1, 15)]
    write_table(os.path.join(a.out, "cie133_tcs.csv"),
                ["CIE 13.3-1995 test colour samples TCS01-TCS14 (spectral radiance factors, 5 nm).",
                 "380-780 nm: the 3-decimal CIE 13.3 values (shared/cie-tables/cie133_tcs_380_780.csv).",
                 "360-375 nm and 785-830 nm: Debian package colord-data, /usr/share/colord/ref/CIE-TCS.sp",
                 "(2 decimals; the colour-matching functions are negligible there). tools/import_cie_tables.py."],
                ids, wl, [series[i] for i in ids])

    # CIE 224:2017 CES: the published table, values and header row unchanged.
    with open(a.ces) as f:
        body = f.read()
    out = os.path.join(a.out, "cie224_ces99.csv")
    with open(out, "w", newline="") as f:
        for h in ["CIE 224:2017 colour evaluation samples CES01-CES99 (spectral reflectance factors, 380-780 nm, 1 nm);",
                  "ANSI/IES TM-30-18/-20 use the same 99 samples. Carried unchanged from the published CIE table",
                  "(shared/cie-tables/cie224_ces99_380_780.csv, published free by the CIE with the standard)",
                  "by tools/import_cie_tables.py. A 5 nm computation uses every fifth row."]:
            f.write("# " + h + "\n")
        f.write(body)
    print("wrote", out)


if __name__ == "__main__":
    main()
