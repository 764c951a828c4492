#pragma once
// CIE colorimetry of spectral power distributions (CIE 15:2004).
#include "lampwright/colour/cie_tables.hpp"
#include "lampwright/core/spectrum.hpp"

namespace lampwright {

struct XYZ {
    double X = 0, Y = 0, Z = 0;
};
struct Chromaticity {  // CIE 1931 (or 1964) x, y
    double x = 0, y = 0;
};
struct UV {  // CIE 1960 (u, v) or CIE 1976 (u', v') depending on context
    double u = 0, v = 0;
};

// Maximum spectral luminous efficacy for photopic vision, lm/W: 683.002 lm/W (CIE 15:2004 and
// CIE S 017, the ILV: the SI candela fixes 683 lm/W at 540 THz, i.e. at 555.016 nm in air, where
// V is slightly below 1; scaled to V(555 nm) = 1 that is 683.002 lm/W).
inline constexpr double kKm = 683.002;

// Relative tristimulus values: sum over 360-830 nm at 1 nm of S(l) * cmf(l) (CIE 15:2004 eq. 7.1
// with k = 1). The spectrum is extended by its nearest value where it does not reach.
XYZ tristimulus(const Spectrum& s, Observer observer = Observer::cie1931_2deg);
// The same from values already on the colour range (kColourSize values).
XYZ tristimulus_colour_range(const double* values, Observer observer);

Chromaticity chromaticity(const XYZ& c);             // x = X/(X+Y+Z), y = Y/(X+Y+Z)
UV uv_1960(const XYZ& c);                            // u = 4X/(X+15Y+3Z), v = 6Y/(X+15Y+3Z) (CIE 1960 UCS)
UV uv_1976(const XYZ& c);                            // u' = u, v' = 1.5 v (CIE 15:2004 eq. 8.1)
UV uv_1960_from_xy(const Chromaticity& xy);          // u = 4x/(-2x+12y+3), v = 6y/(-2x+12y+3)
UV uv_1976_from_xy(const Chromaticity& xy);          // u' = 4x/(-2x+12y+3), v' = 9y/(-2x+12y+3)
Chromaticity xy_from_uv_1960(const UV& uv);          // x = 3u/(2u-8v+4), y = 2v/(2u-8v+4)
Chromaticity xy_from_uv_1976(const UV& uvp);         // x = 9u'/(6u'-16v'+12), y = 4v'/(6u'-16v'+12)

// Luminous efficacy of radiation, lm/W: Km * sum V(l) S(l) / sum S(l), the radiant sum over the
// whole range of the spectrum (UV and IR content lowers it). V = ybar of the 1931 observer.
double luminous_efficacy_of_radiation(const Spectrum& s);

// Luminous flux of a spectrum in W/nm, lm: Phi_v = Km * integral S(l) V(l) dl (CIE 15:2004;
// CIE S 017), summed at 1 nm with integrate_1nm over the spectrum's own data within 360-830 nm
// (where V is tabulated): unlike the colorimetric sums, the spectrum is not extended beyond its
// data, since power that was not measured is not there. V(l) is the CIE 1924 photopic
// luminous efficiency function, identical to ybar of the CIE 1931 observer.
double luminous_flux_lm(const Spectrum& s);

}  // namespace lampwright
