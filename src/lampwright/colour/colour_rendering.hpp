#pragma once
// CIE 13.3-1995 "Method of measuring and specifying colour rendering properties of light
// sources": test colour samples TCS01-TCS14 under the test source and under a reference
// illuminant of the same CCT (Planckian below 5000 K, CIE daylight at and above), von Kries
// adaptation in CIE 1960 (c, d), colour differences in CIE 1964 U*V*W*, Ri = 100 - 4.6 dE,
// Ra = mean of R1-R8.
#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/core/spectrum.hpp"

#include <array>
#include <vector>

namespace lampwright {

// CIE 13.3: below this CCT the reference is Planckian, from it on CIE daylight.
inline constexpr double kCie133DaylightFromK = 5000.0;
// CIE 13.3: results are only meaningful when the source lies within this distance (CIE 1960 uv)
// of the reference illuminant's chromaticity.
inline constexpr double kCie133MaxDc = 5.4e-3;

enum class ReferenceIlluminant { planckian, daylight };

struct ColourRendering {
    double ra = 0;
    std::array<double, 14> ri{};  // R1..R14
    double dc = 0;                // distance of the source from the reference, CIE 1960 uv
    ReferenceIlluminant reference = ReferenceIlluminant::planckian;
    double reference_cct_K = 0;
    bool within_validity() const { return dc <= kCie133MaxDc; }
};

// Relative tristimulus values (CIE 1931 observer) of a source and of TCS01-TCS14 lit by it:
// white X, Y, Z in [0..2], sample i in [3 + 3i .. 5 + 3i]; padded to 48.
using SampleTristimuli = std::array<double, 48>;
SampleTristimuli cie133_tristimuli(const double* colour_range_values);

// The Planckian references on every whole mired from 1e6/5000 - 2 to 1002, 46 values each: the
// white's CIE 1960 u, v and von Kries c, d (CIE 13.3 eq. 3), then W*, U*, V* of TCS01..TCS14
// (eq. 5; U* = 13 W* (u_i - u_white), V* likewise), from the sample tristimuli with the white at
// Y = 1; interpolated by colour rendering with 4-point Lagrange polynomials (error < 1e-7
// relative); computed at build time (precomputed_tables.hpp).
std::vector<double> compute_cie133_planck_reference_table();

// Colour rendering of a source from its sample tristimuli and its CCT.
ColourRendering colour_rendering_from_tristimuli(const SampleTristimuli& test, double cct_K);
// The same from a spectrum.
ColourRendering colour_rendering(const Spectrum& s, double cct_K);

}  // namespace lampwright
