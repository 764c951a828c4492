#pragma once
// Resampling measured spectra onto the 1 nm grid.
//   Uniform spacing (>= 6 points): Sprague quintic interpolation, CIE 167:2005 (recommended
//   practice for tabulated spectral data), with its 4-point end extrapolation formulae.
//   Non-uniform spacing: monotone piecewise cubic Hermite (Fritsch & Carlson 1980, SIAM J. Numer.
//   Anal. 17), which keeps the shape of the data without overshoot.
#include "lampwright/core/spectrum.hpp"

#include <vector>

namespace lampwright {

// True when the wavelengths are equally spaced (relative tolerance 1e-6 of the step).
bool is_uniformly_spaced(const std::vector<double>& wavelengths_nm);

// Sprague interpolation of uniformly spaced data at arbitrary x inside [x0, x_last].
std::vector<double> sprague_interpolate(double x0, double step, const std::vector<double>& y,
                                        const std::vector<double>& x_out);

// Monotone cubic Hermite interpolation at arbitrary x inside [x.front(), x.back()].
std::vector<double> pchip_interpolate(const std::vector<double>& x, const std::vector<double>& y,
                                      const std::vector<double>& x_out);

// The range resample_to_1nm accepts (nm): the spectrum readers' physical range.
inline constexpr double kMinGridNm = 100.0;
inline constexpr double kMaxGridNm = 100000.0;

// Resample onto integer wavelengths ceil(first) .. floor(last); method chosen by spacing.
// Error when the wavelengths lie outside kMinGridNm..kMaxGridNm (or are not finite).
Spectrum resample_to_1nm(const SampledSpectrum& s);
// The same, taking the values over without a copy when they already lie on the 1 nm grid (the
// wavelengths and name of `s` stay; its values are then left empty).
Spectrum resample_to_1nm(SampledSpectrum&& s);

// Linear interpolation in a table (x strictly increasing); clamps to the end values outside.
double interpolate_linear(const std::vector<double>& x, const std::vector<double>& y, double at);

}  // namespace lampwright
