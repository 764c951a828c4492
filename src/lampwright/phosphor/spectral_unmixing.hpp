#pragma once
// Decomposing a measured lamp spectrum into phosphor emissions plus visible mercury lines:
// non-negative least squares (Lawson and Hanson 1974) on the measurement's own grid, each model
// spectrum first seen through the instrument's triangular bandpass (core/bandpass.hpp), and,
// optionally, the reconstruction's chromaticity held to the measured one by two linear
// equality rows (X - (x/y) Y = 0 and Z - (z/y) Y = 0 are linear in the amplitudes).
#include "lampwright/core/spectrum.hpp"
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/phosphor/phosphor.hpp"

#include <array>
#include <string>
#include <vector>

namespace lampwright {

struct UnmixingOptions {
    int bandwidth_nm = 0;              // the instrument's bandpass; 0: the measurement's step
    bool mercury_lines = true;         // free visible mercury line groups
    bool match_chromaticity = true;    // hold the reconstruction's x, y to the measured ones
};

struct UnmixingResult {
    std::vector<double> power;         // W per candidate in the measurement's units (its emission summing to 1 W)
    std::array<double, 4> mercury_power{};  // per line group, same units
    double mercury_visible_fraction = 0;    // mercury lines' share of the 380-780 nm power
    Spectrum model_1nm;                // the reconstruction before the bandpass, on the emission grid
    SampledSpectrum reconstruction;    // at the measured wavelengths, after the bandpass
    double relative_residual = 0;      // ||fit - measured||_2 / ||measured||_2 over the 380-780 nm points
};

// `measured` must lie on a uniform grid of whole nanometres inside the emission grid (a CIE 5 nm
// table, a 1 nm measurement). Throws Error otherwise or when nothing can be fitted.
UnmixingResult unmix_spectrum(const SampledSpectrum& measured, const std::vector<Phosphor>& candidates,
                              const UnmixingOptions& options = {});

}  // namespace lampwright
