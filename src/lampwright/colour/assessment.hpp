#pragma once
// Every figure a datasheet carries for one spectrum: colorimetry (CIE 15:2004), CCT and Duv
// (Ohno 2014 or Robertson 1968), colour rendering (CIE 13.3-1995), colour fidelity and gamut
// (CIE 224:2017, ANSI/IES TM-30-20), luminous efficacy of radiation and spectral shape figures.
#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/colour/colour_fidelity.hpp"
#include "lampwright/colour/colour_rendering.hpp"
#include "lampwright/colour/spectral_features.hpp"
#include "lampwright/core/spectrum.hpp"
#include "lampwright/colour/temperature.hpp"

#include <optional>
#include <string>
#include <vector>

namespace lampwright {

struct AssessOptions {
    // Observer for X, Y, Z, x, y, u', v'. CCT, Duv and colour rendering always use the CIE 1931
    // 2-degree observer, as CIE 15:2004 and CIE 13.3 define them.
    Observer observer = Observer::cie1931_2deg;
    CctMethod cct_method = CctMethod::ohno2014;
    bool spectral_features = true;
    // CIE 224:2017 Rf and the TM-30-20 figures (with the CCT of the 2-degree observer).
    bool colour_fidelity = true;
    // Its interval: 1 nm, or 5 nm for data measured at 5 nm (cie224_interval_for on the data's own
    // wavelengths; the 1 nm spectrum passed in must then hold the data's values at the 5 nm nodes,
    // as every interpolant of resample_to_1nm does).
    int cie224_interval_nm = kCie224IntervalNm;
};

struct Assessment {
    std::string name;
    Observer observer = Observer::cie1931_2deg;
    XYZ xyz;               // relative (k = 1), chosen observer
    Chromaticity xy;       // chosen observer
    UV uv_prime;           // CIE 1976 u', v', chosen observer
    UV uv1960;             // CIE 1960 u, v, 2-degree observer
    CctResult cct;         // 2-degree observer
    std::optional<ColourRendering> rendering;  // present when the CCT is
    std::optional<ColourFidelity> fidelity;    // CIE 224 / TM-30; present when the CCT is (and asked for)
    double ler_lm_per_W = 0;
    // Absolute photometry, for a spectrum in W/nm (Spectrum::absolute): luminous flux, and with
    // the lamp's electrical input power its luminous efficacy (lm/W). Empty for relative spectra,
    // which have no scale.
    bool absolute = false;
    std::optional<double> luminous_flux_lm, electrical_power_W, efficacy_lm_per_W;
    SpectralFeatures features;
    std::vector<std::string> warnings;  // e.g. CIE 13.3 validity, no CCT
};

// Throws lampwright::Error when the spectrum has no visible power (no chromaticity exists).
Assessment assess(const Spectrum& s, const AssessOptions& options = {});
// A measured spectrum on its own wavelengths: resampled to 1 nm (resample_to_1nm) and assessed,
// CIE 224 at the data's own interval (cie224_interval_for: 5 nm data at 5 nm with the 5 nm CES).
Assessment assess_sampled(const SampledSpectrum& s, AssessOptions options = {});
// The same, taking the values over without a copy when they are on the 1 nm grid (the name stays).
Assessment assess_sampled(SampledSpectrum&& s, AssessOptions options = {});

// The figures that follow from the CIE 13.3 sample tristimuli (cie133_tristimuli) and the radiant
// integral alone: colorimetry with the 2-degree observer, CCT, Duv, colour rendering and LER; no
// spectral features. assess() uses it; so does the blend optimiser, whose blends are linear in both.
Assessment assess_from_tristimuli(const SampleTristimuli& tri, double radiant_integral, CctMethod method = CctMethod::ohno2014);

}  // namespace lampwright
