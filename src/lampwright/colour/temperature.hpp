#pragma once
// Correlated colour temperature and distance from the Planckian locus (CIE 15:2004, 9.5).
//   Ohno 2014 (LEUKOS 10:1, "Practical use and calculation of CCT and Duv"): nearest point of a
//   Planckian table, then the triangular solution (|Duv| < 0.002) or the parabolic one. The table
//   here steps 0.1 % in T from 1000 to 100000 K (Ohno's 1 % table needs correction factors; this
//   one does not: against a direct search of the locus it is within 0.03 K up to 20000 K and
//   2e-6 relative up to 100000 K, from interpolating linearly in T between table points).
//   Robertson 1968 (JOSA 58, 1528): interpolation between isotemperature lines at Robertson's
//   mired values 0-600, extended to 1000 mired; the lines are computed from the CIE 1931 observer
//   rather than copied, which avoids the misprint of the widely copied table (325 mirek).
// Both use CIE 1960 (u, v) and the CIE 1931 2-degree observer; Duv > 0 above the locus.
#include "lampwright/colour/colorimetry.hpp"

#include <string>
#include <vector>

namespace lampwright {

enum class CctMethod { ohno2014, robertson1968 };

inline constexpr double kCctMinK = 1000.0;
inline constexpr double kCctMaxK = 100000.0;
// CCT has no meaning farther than this from the locus in (u, v) (CIE 15:2004, 9.5).
inline constexpr double kCctMaxDuv = 0.05;

struct CctResult {
    bool valid = false;
    double cct_K = 0;     // meaningful only when valid
    double duv = 0;       // signed distance from the locus in CIE 1960 uv (set whenever computable)
    std::string problem;  // why there is no CCT, when !valid
};

CctResult correlated_colour_temperature(const UV& uv1960, CctMethod method = CctMethod::ohno2014);

// The Planckian locus point at T (CIE 1960 uv, CIE 1931 observer, 360-830 nm at 1 nm).
UV planck_uv(double temperature_K);
// The same from the Ohno table (4-point Lagrange in T, within about 1e-13 of planck_uv) inside
// its range (999-100200 K), planck_uv outside it: for curves that need many locus points.
UV planck_uv_tabulated(double temperature_K);

// The tables behind the two methods, computed at build time (precomputed_tables.hpp): the Ohno
// table (every T from 1000/1.001^2 K up, 0.1 % a step, to 100000 x 1.001^2 K; all T, then all
// u, then all v) and Robertson's isotemperature lines (mired, u, v and the unit tangent tu, tv).
std::vector<double> compute_ohno_planck_table();
std::vector<double> compute_robertson_lines();

}  // namespace lampwright
