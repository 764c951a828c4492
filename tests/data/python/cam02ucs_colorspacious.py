#!/usr/bin/python3
"""Reference CIECAM02 / CAM02-UCS values from Debian's python3-colorspacious, for
tests/test_ciecam02.cpp. Reads lines "Xw Yw Zw X Y Z" (white and sample on one scale, the white's
Y = 100) and prints "J C h J' a' b'" per line with 17 significant digits.

Viewing conditions of CIE 224:2017: L_A = 100 cd/m^2, Y_b = 20, average surround, D = 1.
colorspacious computes D from F and L_A (CIE 159 eq. 7); for D = 1 its D-dependent
quantities are recomputed below with colorspacious's own formulas (CIECAM02Space.__init__).
"""
import sys

import numpy as np
from colorspacious import CIECAM02Space, CIECAM02Surround, cspace_convert
from colorspacious.ciecam02 import M_HPE_M_CAT02_inv

spaces = {}


def space(white):
    key = tuple(white)
    if key not in spaces:
        s = CIECAM02Space(white, 20.0, 100.0, CIECAM02Surround.AVERAGE)
        s.D = 1.0
        s.D_RGB = s.D * s.XYZ100_w[1] / s.RGB_w + 1 - s.D
        s.RGB_wc = s.D_RGB * s.RGB_w
        s.RGBprime_w = np.dot(M_HPE_M_CAT02_inv, s.RGB_wc)
        tmp = ((s.F_L * s.RGBprime_w) / 100) ** 0.42
        s.RGBprime_aw = 400 * (tmp / (tmp + 27.13)) + 0.1
        s.A_w = (np.dot([2, 1, 1.0 / 20], s.RGBprime_aw) - 0.305) * s.N_bb
        spaces[key] = s
    return spaces[key]


for line in sys.stdin:
    v = [float(x) for x in line.split()]
    if len(v) != 6:
        continue
    s = space(v[:3])
    cam = s.XYZ100_to_CIECAM02(v[3:])
    ucs = cspace_convert(v[3:], "XYZ100", {"name": "CAM02-UCS", "ciecam02_space": s})
    print(" ".join("%.17g" % x for x in [cam.J, cam.C, cam.h, ucs[0], ucs[1], ucs[2]]))
