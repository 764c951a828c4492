#!/usr/bin/env python3
"""Make the invented demo spectra in examples/spectra from the example recipes.

Each file is a blend spectrum from `lampwright blend --spectrum-out`, seen through a 2 nm
triangular bandpass (weights 1/4, 1/2, 1/4 on the 1 nm grid, as a spectroradiometer of 2 nm
bandwidth records it; point sampling would drop the lines on odd wavelengths) and sampled every
2 nm over 360-830 nm, scaled to a spectroradiometer-like W/nm level and given 0.3 % Gaussian noise with a
fixed seed. Invented data for the demo only: no real lamp was measured.
Usage: tools/make_demo_spectra.py [path/to/lampwright]
"""
import os
import random
import subprocess
import sys
import tempfile

root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
exe = sys.argv[1] if len(sys.argv) > 1 else os.path.join(root, "build", "lampwright")
demos = [("triband_4000K.toml", "triband_tube_sample.csv", "a tri-band 4000 K tube from our invented line 2"),
         ("halophosphate_3000K.toml", "halophosphate_tube_sample.csv", "a warm halophosphate tube from our invented line 1"),
         ("led395_module.toml", "led395_module_sample.csv", "our invented 395 nm LED module")]
rng = random.Random(2026)
for recipe, out, what in demos:
    with tempfile.TemporaryDirectory() as tmp:
        spec = os.path.join(tmp, "s.csv")
        subprocess.run([exe, "blend", os.path.join(root, "examples", "recipes", recipe), "--spectrum-out", spec],
                       check=True, stdout=subprocess.DEVNULL)
        rows = [l.strip().split(",") for l in open(spec) if l[0].isdigit()]
    data = {int(r[0]): float(r[1]) for r in rows}
    peak = max(data.values())
    with open(os.path.join(root, "examples", "spectra", out), "w") as f:
        f.write(f"# INVENTED DEMO DATA: simulated spectroradiometer reading of {what}.\n")
        f.write(f"# Made by tools/make_demo_spectra.py from examples/recipes/{recipe}; no real lamp was measured.\n")
        f.write("wavelength_nm,spectral_power_W_per_nm\n")
        for nm in range(360, 831, 2):
            seen = 0.25 * data.get(nm - 1, 0.0) + 0.5 * data[nm] + 0.25 * data.get(nm + 1, 0.0)
            v = seen / peak * 0.05 * (1 + rng.gauss(0, 0.003)) + rng.gauss(0, 5e-7)
            f.write(f"{nm},{v:.7f}\n")
    print("wrote", out)
