#pragma once
// Shape figures of a spectrum, useful for single-phosphor spectra: peak, centroid, width of the
// main peak, and dominant wavelength with excitation purity (CIE 15:2004, 9.1) relative to the
// equal-energy white E (x = y = 1/3).
#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/core/spectrum.hpp"

namespace lampwright {

struct SpectralFeatures {
    double peak_nm = 0;      // maximum, refined by a parabola through the three highest samples
    double centroid_nm = 0;  // sum(l S) / sum(S) over the spectrum's own range
    double fwhm_nm = 0;      // full width at half maximum of the main peak; NaN if the peak runs off the data
    // Dominant wavelength in nm; negative for a complementary wavelength (purple region),
    // following the CIE convention of writing it as "-l" or "l c".
    double dominant_nm = 0;
    double purity = 0;       // excitation purity, 0 (white) .. 1 (spectrum locus or purple line)
};

SpectralFeatures spectral_features(const Spectrum& s, const Chromaticity& xy_2deg);

// Dominant (or negative complementary) wavelength and excitation purity of xy against white w.
void dominant_wavelength(const Chromaticity& xy, const Chromaticity& white, double& wavelength_nm, double& purity);

}  // namespace lampwright
