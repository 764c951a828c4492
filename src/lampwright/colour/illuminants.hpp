#pragma once
// Reference illuminants: Planckian radiators, CIE daylight, CIE illuminant A.
#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/core/spectrum.hpp"

namespace lampwright {

// Second radiation constant, m*K, as CIE 15:2004 prescribes for Planckian radiators (ITS-90).
inline constexpr double kC2 = 1.4388e-2;

// Planck's law without its first constant: lambda^-5 / (exp(c2 / (lambda T)) - 1), lambda in m.
double planck_relative(double wavelength_nm, double temperature_K);
// A Planckian radiator on first..last nm at 1 nm, scaled to 1 at 560 nm.
Spectrum planckian(double temperature_K, int first_nm = kColourFirstNm, int last_nm = kColourLastNm);

// CIE daylight locus (CIE 15:2004 eqs. 3.3-3.4) for 4000-25000 K. Outside that range the formula
// is extrapolated only when allowed; otherwise lampwright::Error.
Chromaticity daylight_chromaticity(double cct_K, bool allow_extrapolation = false);
// M1, M2 of a CIE daylight illuminant at chromaticity xy, rounded to 3 decimals (CIE 15:2004 eq. 3.5).
struct DaylightWeights {
    double m1 = 0, m2 = 0;
};
// CIE 15:2004 rounds M1, M2 so that computed daylights match the tabulated D65; CIE 224:2017
// needs a reference that is continuous in CCT, and uses them unrounded (round_weights = false).
DaylightWeights daylight_weights(const Chromaticity& xy, bool round_weights = true);
// S0 + M1 S1 + M2 S2 on 300-830 nm at 1 nm (CIE 15:2004, 3.1).
Spectrum daylight(double cct_K, bool allow_extrapolation = false, bool round_weights = true);

// CIE standard illuminant A from its defining formula (CIE 15:2004 eq. 3.1; c2 = 1.435e-2 m K,
// T = 2848 K, 100 at 560 nm) on 300-830 nm.
Spectrum cie_illuminant_a();

}  // namespace lampwright
