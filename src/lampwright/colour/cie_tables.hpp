#pragma once
// The CIE tables in data/cie (see data/cie/README.md for where each number comes from), loaded
// once on first use and resampled to the 1 nm grid.
#include "lampwright/core/spectrum.hpp"

#include <array>
#include <vector>

namespace lampwright {

enum class Observer { cie1931_2deg, cie1964_10deg };

// Colour-matching functions on 360-830 nm at 1 nm: the 5 nm tables of CIE 15:2004 (Tables T.4,
// T.5) Sprague-interpolated (CIE 167:2005).
struct ColourMatchingFunctions {
    std::array<std::vector<double>, 3> xyz;  // xbar, ybar, zbar; kColourSize values each
};
const ColourMatchingFunctions& colour_matching_functions(Observer observer);

// CIE daylight components S0, S1, S2 (CIE 15:2004 Table T.2) at 1 nm on 300-830 nm, linearly
// interpolated as CIE 15:2004 (3.1, note 6) directs for these functions.
const std::array<Spectrum, 3>& daylight_components();

// CIE 13.3-1995 test colour samples TCS01-TCS14 on 360-830 nm at 1 nm (Sprague).
const std::array<std::vector<double>, 14>& cie133_test_samples();

// CIE 224:2017 colour evaluation samples CES01-CES99 (also those of ANSI/IES TM-30-20): spectral
// reflectance factors on 380-780 nm at 1 nm (kCesSize values each), as tabulated.
inline constexpr int kCesFirstNm = 380;
inline constexpr int kCesLastNm = 780;
inline constexpr int kCesSize = kCesLastNm - kCesFirstNm + 1;
inline constexpr int kCesCount = 99;
const std::array<std::vector<double>, kCesCount>& cie224_colour_evaluation_samples();

// CIE 15:2004 Table T.6 fluorescent illuminant FLn (n = 1..12): the 5 nm table and its 1 nm form.
SampledSpectrum cie_fl_table(int n);
Spectrum cie_fl_illuminant(int n);

}  // namespace lampwright
