#pragma once
// CIE 224:2017 "Colour fidelity index for accurate scientific use" (Rf, Rf per sample) and the
// gamut and hue-bin figures of ANSI/IES TM-30-20 "Method for evaluating light source colour
// rendition" (Rg, Rf,hj, Rcs,hj, Rhs,hj), from the 99 colour evaluation samples (CES) under the
// test source and under a reference illuminant of the same CCT.
//   Spectra on 380-780 nm at 1 nm (CIE 224:2017, 4.1; values outside are not used); tristimulus
//   values with the CIE 1964 10-degree observer; CIECAM02 with L_A = 100 cd/m^2, Y_b = 20, average
//   surround and D = 1, then CAM02-UCS J'a'b' (CIE 224:2017, 4.4); Rf from the mean CAM02-UCS
//   difference (CIE 224:2017 eq. 9-10). The CCT (Ohno, CIE 1931 2-degree observer) is the caller's.
#include "lampwright/colour/ciecam02.hpp"
#include "lampwright/colour/cie_tables.hpp"
#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/core/spectrum.hpp"

#include <array>
#include <vector>

namespace lampwright {

// CIE 224:2017 eq. 10: the scale factor c_f of Rf = 10 ln(exp((100 - c_f dE')/10) + 1).
inline constexpr double kCie224ScaleFactor = 6.73;
// CIE 224:2017, 4.3: Planckian reference below 4000 K, CIE daylight above 5000 K, between them
// a mix of the two (each normalised to Y10 = 100) with daylight weight (T - 4000 K) / 1000 K.
inline constexpr double kCie224PlanckianBelowK = 4000.0;
inline constexpr double kCie224DaylightAboveK = 5000.0;
// ANSI/IES TM-30-20: 16 hue bins of 22.5 degrees by the samples' hue angle under the reference.
inline constexpr int kTm30HueBins = 16;
// The spectral interval of the computation: 1 nm (CIE 224:2017, 4.1 prefers 1 nm), or 5 nm for
// data measured on a 5 nm grid, with the 5 nm CES (the 1 nm table at every fifth node), as
// CIE 224:2017, 4.1 allows. Data at any other step are resampled to 1 nm first (Sprague, CIE 167:2005).
inline constexpr int kCie224IntervalNm = 1;
inline constexpr int kCie224CoarseIntervalNm = 5;

enum class FidelityReference { planckian, mix, daylight };

// Relative 10-degree tristimulus sums over 380-780 nm at 1 nm: rows 0-2 the source itself, rows
// 3 + 3i .. 5 + 3i the source on CES i + 1; padded to whole blocks of 48.
inline constexpr int kCesTristimulusRows = 336;
using CesTristimuli = std::array<double, kCesTristimulusRows>;
// colour_range_values: kColourSize values, 360-830 nm at 1 nm. At interval_nm = 5 the sums run over
// 380, 385, ..., 780 nm only (the 5 nm CES), so the values there must be the data's own samples.
CesTristimuli cie224_tristimuli(const double* colour_range_values, int interval_nm = kCie224IntervalNm);
// The interval CIE 224 is computed at for data on these wavelengths: 5 for a uniform 5 nm grid
// whose nodes fall on 380, 385, ..., 780 nm; else 1.
int cie224_interval_for(const std::vector<double>& wavelengths_nm);
// A spectrum's values on 360-830 nm at 1 nm with zeros where it has no data (CIE 224:2017, 4.1:
// missing values are zero, not extended as in CIE 15 colorimetry).
std::vector<double> cie224_range_values(const Spectrum& s);

struct ColourFidelity {
    double rf = 0;                             // CIE 224:2017 Rf (= TM-30-20 Rf)
    double rg = 0;                             // TM-30-20 gamut index
    std::array<double, kCesCount> rf_ces{};    // Rf,CESi
    std::array<double, kTm30HueBins> rf_h{};   // Rf,hj, j = 1..16
    std::array<double, kTm30HueBins> rcs_h_percent{};  // Rcs,hj, local chroma shift, per cent
    std::array<double, kTm30HueBins> rhs_h{};  // Rhs,hj, local hue shift (a fraction, as TM-30 gives it)
    std::array<int, kTm30HueBins> ces_in_bin{};
    // Bin averages of CAM02-UCS a', b' under the test source and under the reference (the
    // vertices of the colour vector graphic); NaN for a bin without samples.
    std::array<double, kTm30HueBins> test_a{}, test_b{}, reference_a{}, reference_b{};
    double reference_cct_K = 0;
    FidelityReference reference = FidelityReference::planckian;
    double daylight_weight = 0;  // share of daylight in the reference, 0..1
    Chromaticity xy10;           // the source's CIE 1964 x10, y10 over 380-780 nm
    int interval_nm = kCie224IntervalNm;
};

// CIE 224 / TM-30 figures of a source from its tristimulus sums and CCT (1000-100000 K). The
// reference's J'a'b' come from a table over mired (tabulated_reference) or are computed directly.
// At interval_nm = 5 the reference is computed directly at 5 nm (no table).
ColourFidelity colour_fidelity_from_tristimuli(const CesTristimuli& test, double cct_K, bool tabulated_reference = true,
                                              int interval_nm = kCie224IntervalNm);
// That table: the reference's J', a', b' of the 99 samples (297 values) on every whole mired from
// 10 (100000 K) to 1000 (1000 K); computed at build time (precomputed_tables.hpp).
std::vector<double> compute_cie224_reference_jab_table();
ColourFidelity colour_fidelity(const Spectrum& s, double cct_K, int interval_nm = kCie224IntervalNm);

// The CIE 224 reference illuminant at cct_K on 360-830 nm at 1 nm, scaled to Y10 = 100 over 380-780 nm.
Spectrum cie224_reference_illuminant(double cct_K);
FidelityReference cie224_reference_kind(double cct_K);

// CIE 224:2017 eq. 10 for one colour difference.
double cie224_rf_from_difference(double delta_e);

}  // namespace lampwright
