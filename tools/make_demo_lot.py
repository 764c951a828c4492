#!/usr/bin/env python3
"""Make the invented demo lot in examples/qc/lot_A: 40 simulated spectroradiometer readings of
tri-band 4000 K tubes coated from examples/recipes/triband_4000K.toml on our invented line 2.

Each lamp:
  * weighing error: every component's mass fraction is multiplied by (1 + N(0, 1 %)) (the blend
    model normalises the fractions); lamps 37 and 40 have a deliberate weighing slip, said so in
    their header;
  * the blend spectrum of that recipe from `lampwright blend --spectrum-out` (1 nm);
  * simulated measurement: a triangular instrument bandpass of 2 nm FWHM, sampled every 2 nm over
    360-830 nm, scaled to a W/nm-like level with a lamp-to-lamp output spread of 3 %, 0.3 %
    multiplicative Gaussian noise per sample and a small additive noise floor.
A fixed seed makes the lot reproducible. Invented data for the demo only: no real lamp was
measured. Usage: tools/make_demo_lot.py [path/to/lampwright] [--lot B]

--lot B makes examples/qc/lot_B instead: the same recipe and line, with a drift for the QC drift
diagnosis (qc --recipe): the blue BaMgAl10O17:Eu2+ of this lot came from a new delivery that
absorbs 10 % less at 254 nm (its `absorption` 0.90 instead of the library's 1.0, as a coarser
powder would), every lamp; lamps 12 and 33 have weighing slips; another seed.
"""
import os
import random
import subprocess
import sys
import tempfile

root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
args = [a for a in sys.argv[1:]]
lot = "A"
if "--lot" in args:
    k = args.index("--lot")
    lot = args[k + 1]
    del args[k:k + 2]
if lot not in ("A", "B"):
    sys.exit("make_demo_lot.py: --lot is A or B")
exe = args[0] if args else os.path.join(root, "build", "lampwright")
recipe_rel = "examples/recipes/triband_4000K.toml"
out_dir = os.path.join(root, "examples", "qc", "lot_" + lot)
n_lamps = 40
weighing_sd = 0.01        # relative, per component mass fraction
gain_noise = 0.003        # relative, per sample
floor_noise = 5e-7        # W/nm, per sample (the peak is about 0.05 W/nm)
# Deliberate weighing slips (lamp number -> (component index, factor, what happened)).
slips = {
    37: (2, 0.80, "the blue BaMgAl10O17:Eu2+ was weighed 20 % short"),
    40: (0, 1.15, "the red Y2O3:Eu3+ was weighed 15 % over (a scoop too many)"),
} if lot == "A" else {
    12: (0, 1.20, "the red Y2O3:Eu3+ was weighed 20 % over"),
    33: (1, 0.80, "the green LaPO4:Ce3+,Tb3+ was weighed 20 % short"),
}
# Lot B: per-component absorption at 254 nm written into each lamp's recipe (None: the library's).
drift_absorption = {2: 0.90} if lot == "B" else {}
seed = 20261202 if lot == "A" else 20261204


def read_recipe(path):
    """The recipe's header lines and its components as (phosphor, mass fraction)."""
    header, comps = [], []
    for line in open(path):
        s = line.strip()
        if s.startswith("[[component]]"):
            comps.append([None, None])
        elif comps and s.startswith("phosphor"):
            comps[-1][0] = s.split("=", 1)[1].strip().strip('"')
        elif comps and s.startswith("mass_fraction"):
            comps[-1][1] = float(s.split("=", 1)[1])
        elif not comps and s and not s.startswith("#"):
            header.append(s)
    return header, comps


def blend_spectrum(header, comps, tmp):
    rec = os.path.join(tmp, "lamp.toml")
    with open(rec, "w") as f:
        f.write("\n".join(header) + "\n")
        for k, (phosphor, fraction) in enumerate(comps):
            f.write(f'\n[[component]]\nphosphor = "{phosphor}"\nmass_fraction = {fraction:.6f}\n')
            if k in drift_absorption:
                f.write(f"absorption = {drift_absorption[k]}\n")
    spec = os.path.join(tmp, "lamp.csv")
    subprocess.run([exe, "blend", rec, "--spectrum-out", spec], check=True, stdout=subprocess.DEVNULL)
    return {int(r[0]): float(r[1]) for r in (l.strip().split(",") for l in open(spec) if l[0].isdigit())}


def measure(data, rng, scale):
    """Triangular 2 nm FWHM bandpass (weights 1/4, 1/2, 1/4 at 1 nm), every 2 nm, with noise."""
    peak = max(data.values())
    rows = []
    for nm in range(360, 831, 2):
        v = 0.25 * data.get(nm - 1, 0.0) + 0.5 * data[nm] + 0.25 * data.get(nm + 1, 0.0)
        v = v / peak * 0.05 * scale * (1 + rng.gauss(0, gain_noise)) + rng.gauss(0, floor_noise)
        rows.append((nm, v))
    return rows


def main():
    header, nominal = read_recipe(os.path.join(root, recipe_rel))
    os.makedirs(out_dir, exist_ok=True)
    rng = random.Random(seed)
    with tempfile.TemporaryDirectory() as tmp:
        for i in range(1, n_lamps + 1):
            comps = [[p, m * (1 + rng.gauss(0, weighing_sd))] for p, m in nominal]
            note = ""
            if i in slips:
                k, factor, what = slips[i]
                comps[k][1] *= factor
                note = f"# Deliberate fault for the demo: weighing slip, {what}.\n"
            total = sum(m for _, m in comps)
            data = blend_spectrum(header, comps, tmp)
            rows = measure(data, rng, 1 + rng.gauss(0, 0.03))
            name = f"lamp_{i:02d}"
            with open(os.path.join(out_dir, name + ".csv"), "w") as f:
                f.write(f"# INVENTED DEMO DATA: simulated spectroradiometer reading of tube {name} of lot {lot} from our invented\n")
                f.write(f"# coating line 2 (no real lamp was measured). Made by tools/make_demo_lot.py from {recipe_rel}\n")
                f.write("# with simulated weighing error (1 % relative per component) and measurement noise (2 nm bandpass,\n")
                f.write("# 2 nm steps, 0.3 % noise). Mass fractions as weighed: "
                        + ", ".join(f"{p} {m / total:.4f}" for p, m in comps) + "\n")
                for k, a in drift_absorption.items():
                    f.write(f"# Drift of this lot: {comps[k][0]} from a delivery absorbing {a:g} x the library's value at 254 nm.\n")
                f.write(note)
                f.write(f"wavelength_nm,{name}\n")
                for nm, v in rows:
                    f.write(f"{nm},{v:.7f}\n")
            print("wrote", os.path.relpath(os.path.join(out_dir, name + ".csv"), root))


if __name__ == "__main__":
    main()
