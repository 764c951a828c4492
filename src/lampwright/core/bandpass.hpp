#pragma once
// What a scanning spectroradiometer records: the true spectrum seen through its slit function.
// A triangular slit function whose FWHM equals the bandwidth is the usual model (CIE 214:2014,
// from memory); the CIE FL1-FL12 tables behave so (a 435.8 nm line appears as 0.84 at 435 nm
// and 0.16 at 440 nm, i.e. a 5 nm triangle).
#include "lampwright/core/spectrum.hpp"

#include <vector>

namespace lampwright {

// The 1 nm spectrum convolved with a unit-area triangle of FWHM `bandwidth_nm` (a whole number
// of nm, >= 1; 1 returns the spectrum unchanged). Values beyond the data count as zero.
Spectrum triangular_bandpass(const Spectrum& s, int bandwidth_nm);

// Values at the given integer wavelengths (zero outside the data): what a table on that grid holds.
std::vector<double> values_at(const Spectrum& s, const std::vector<int>& nm);

}  // namespace lampwright
