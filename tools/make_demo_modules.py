#!/usr/bin/env python3
"""Make the invented module trials in examples/calibration (module*.csv) for `lampwright calibrate`.

Each spectrum is the layer model's own output (`lampwright layer --spectrum-out`, two-flux, at the
design's operating temperature) for the trial design with chosen "true" parameters of our invented
LED module maker's line: mass absorption coefficient x 1.5, grain scattering x 0.75, the nitride's
quantum efficiency x 0.9. It is seen through a 2 nm triangular bandpass (weights 1/4, 1/2, 1/4 on
the 1 nm grid), sampled every 2 nm over 360-830 nm, scaled to a relative level and given Gaussian
noise of 0.2 % of the peak with a fixed seed. Invented data for the demo only: no real module was
measured. Usage: tools/make_demo_modules.py [path/to/lampwright]
"""
import os
import random
import re
import subprocess
import sys
import tempfile

root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
exe = sys.argv[1] if len(sys.argv) > 1 else os.path.join(root, "build", "lampwright")
folder = os.path.join(root, "examples", "calibration")
TRUE_KAPPA, TRUE_SCATTERING, TRUE_NITRIDE = 1.5, 0.75, 0.9
modules = ["module1.toml", "module2.toml", "module3.toml"]
rng = random.Random(20261204)
for design in modules:
    text = open(os.path.join(folder, design)).read()
    # The "true" module: kappa, scattering and the nitride's brightness altered in a copy of the design.
    kappa = float(re.search(r"mass_absorption_cm2_per_g\s*=\s*([0-9.]+)", text).group(1)) if "mass_absorption_cm2_per_g" in text else 1000.0
    truth = re.sub(r"mass_absorption_cm2_per_g\s*=.*\n", "", text)
    truth = truth.replace("[layer]\n", f"[layer]\nmass_absorption_cm2_per_g = {kappa * TRUE_KAPPA}\nscattering_scale = {TRUE_SCATTERING}\n", 1)
    truth = truth.replace('phosphor = "CaAlSiN3:Eu2+"\n', f'phosphor = "CaAlSiN3:Eu2+"\nbrightness_factor = {TRUE_NITRIDE}\n')
    with tempfile.TemporaryDirectory() as tmp:
        path = os.path.join(tmp, "truth.toml")
        open(path, "w").write(truth)
        spec = os.path.join(tmp, "s.csv")
        subprocess.run([exe, "layer", path, "--spectrum-out", spec], check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        rows = [l.strip().split(",") for l in open(spec) if l[0].isdigit()]
    data = {int(r[0]): float(r[1]) for r in rows}
    seen = {nm: 0.25 * data[nm - 1] + 0.5 * data[nm] + 0.25 * data[nm + 1] for nm in range(360, 831, 2)}
    peak = max(seen.values())
    out = design.replace(".toml", ".csv")
    with open(os.path.join(folder, out), "w") as f:
        f.write(f"# INVENTED DEMO DATA, not a measurement: a simulated spectroradiometer reading of trial module {design}\n")
        f.write("# of our invented LED module maker, made by tools/make_demo_modules.py from the lampwright layer model with\n")
        f.write(f"# 'true' parameters kappa x {TRUE_KAPPA}, scattering x {TRUE_SCATTERING}, CaAlSiN3:Eu2+ QE x {TRUE_NITRIDE}; 2 nm triangular\n")
        f.write("# bandpass, 2 nm grid, relative values, Gaussian noise of 0.2 % of the peak (Python random.gauss, seed 20261204), cut at 0.\n")
        f.write("wavelength_nm,relative_power\n")
        for nm in range(360, 831, 2):
            v = max(0.0, seen[nm] / peak + rng.gauss(0, 0.002))  # a spectroradiometer reports no negative power
            f.write(f"{nm},{v:.6f}\n")
    print("wrote", out)
