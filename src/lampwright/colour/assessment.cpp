#include "lampwright/colour/assessment.hpp"

#include "lampwright/core/interpolation.hpp"

#include "lampwright/core/error.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <string>
#include <vector>

namespace lampwright {

Assessment assess_from_tristimuli(const SampleTristimuli& tri, double radiant, CctMethod method) {
    Assessment a;
    const XYZ xyz2{tri[0], tri[1], tri[2]};
    if (!(xyz2.X + xyz2.Y + xyz2.Z > 0) || !(xyz2.Y > 0))
        throw Error("the spectrum has no visible power in 360-830 nm: no chromaticity can be computed");
    a.xyz = xyz2;
    a.xy = chromaticity(a.xyz);
    a.uv_prime = uv_1976(a.xyz);
    a.uv1960 = uv_1960(xyz2);
    a.ler_lm_per_W = kKm * xyz2.Y / radiant;
    a.cct = correlated_colour_temperature(a.uv1960, method);
    if (a.cct.valid) {
        a.rendering = colour_rendering_from_tristimuli(tri, a.cct.cct_K);
        if (!a.rendering->within_validity())
            a.warnings.push_back(fmt::format("the source is {:.4f} from its reference illuminant in CIE 1960 uv, beyond the "
                                             "CIE 13.3 limit of {:.4f}: colour rendering indices are indicative only",
                                             a.rendering->dc, kCie133MaxDc));
    } else {
        a.warnings.push_back(a.cct.problem + "; colour rendering not computed");
    }
    return a;
}

namespace {

// Above this largest value the tristimulus sums (value x colour matching function x 471 samples,
// and the wavelength-weighted centroid sum) could overflow a double. Every figure but X, Y, Z is
// independent of the spectrum's scale, so such a spectrum is assessed scaled to a largest value of 1.
constexpr double kRescaleAbove = 1e250;

// Every printed figure must be a finite number; a spectrum whose figures are not is a bad input.
// FWHM is NaN by design when the peak runs off the data, and is left out.
void require_finite(const Assessment& a) {
    std::vector<std::string> bad;
    const auto check = [&](const char* name, double v) {
        if (!std::isfinite(v)) bad.push_back(name);
    };
    check("X", a.xyz.X);
    check("Y", a.xyz.Y);
    check("Z", a.xyz.Z);
    check("x", a.xy.x);
    check("y", a.xy.y);
    check("u'", a.uv_prime.u);
    check("v'", a.uv_prime.v);
    check("Duv", a.cct.duv);
    if (a.cct.valid) check("CCT", a.cct.cct_K);
    if (a.rendering) {
        check("Ra", a.rendering->ra);
        for (double r : a.rendering->ri) check("Ri", r);
    }
    if (a.fidelity) {
        check("Rf", a.fidelity->rf);
        check("Rg", a.fidelity->rg);
    }
    check("LER", a.ler_lm_per_W);
    if (a.luminous_flux_lm) check("luminous flux", *a.luminous_flux_lm);
    if (a.efficacy_lm_per_W) check("luminous efficacy", *a.efficacy_lm_per_W);
    check("peak", a.features.peak_nm);
    check("centroid", a.features.centroid_nm);
    check("dominant wavelength", a.features.dominant_nm);
    check("purity", a.features.purity);
    if (bad.empty()) return;
    bad.erase(std::unique(bad.begin(), bad.end()), bad.end());
    std::string names;
    for (const auto& b : bad) names += (names.empty() ? "" : ", ") + b;
    throw Error("values too large or not finite: " + names + " overflow or are undefined");
}

Assessment assess_finite(const Spectrum& s, const AssessOptions& options) {
    std::array<double, kColourSize> values;
    colour_range_values(s, values.data());
    const SampleTristimuli tri = cie133_tristimuli(values.data());
    const double radiant = radiant_integral(s);
    if (!(radiant > 0)) throw Error("the spectrum's integral over its range is not positive: no luminous efficacy can be computed");
    Assessment a = assess_from_tristimuli(tri, radiant, options.cct_method);
    a.name = s.name;
    a.observer = options.observer;
    if (options.observer != Observer::cie1931_2deg) {
        a.xyz = tristimulus_colour_range(values.data(), options.observer);
        a.xy = chromaticity(a.xyz);
        a.uv_prime = uv_1976(a.xyz);
    }
    if (options.colour_fidelity && a.cct.valid) {
        // CIE 224:2017, 4.1: zero outside the data (not extended), within 380-780 nm.
        const bool covered = s.covers(kCesFirstNm) && s.covers(kCesLastNm);
        const int iv = options.cie224_interval_nm;
        const CesTristimuli ces = covered ? cie224_tristimuli(values.data(), iv) : cie224_tristimuli(cie224_range_values(s).data(), iv);
        try {
            a.fidelity = colour_fidelity_from_tristimuli(ces, a.cct.cct_K, true, iv);
        } catch (const Error& e) {
            a.warnings.push_back(std::string(e.what()) + "; Rf and Rg not computed");
        }
    }
    if (options.spectral_features) a.features = spectral_features(s, chromaticity(XYZ{tri[0], tri[1], tri[2]}));
    if (s.absolute) {
        a.absolute = true;
        a.luminous_flux_lm = luminous_flux_lm(s);
    }
    return a;
}

// Luminous efficacy of the source = luminous flux / electrical input power (lm/W).
void add_efficacy(Assessment& a, const Spectrum& s) {
    if (!s.electrical_power_W) return;
    if (!(std::isfinite(*s.electrical_power_W) && *s.electrical_power_W > 0))
        throw Error(fmt::format("electrical input power {:g} W is not a positive number", *s.electrical_power_W));
    a.electrical_power_W = s.electrical_power_W;
    if (a.luminous_flux_lm) a.efficacy_lm_per_W = *a.luminous_flux_lm / *s.electrical_power_W;
}

}  // namespace

Assessment assess(const Spectrum& s, const AssessOptions& options) {
    // The largest |value| in four independent running maxima (max is exact in any order), and
    // whether any value is not finite (NaN fails every comparison): a loop without a branch or a
    // dependence chain through memory, which took a third of a CIE 13.3 assessment.
    double m0 = 0, m1 = 0, m2 = 0, m3 = 0;
    bool finite = true;
    const auto step = [&finite](double& m, double v) {
        const double a = std::fabs(v);
        finite &= a <= std::numeric_limits<double>::max();
        m = a > m ? a : m;
    };
    const std::size_t n = s.values.size();
    const double* v = s.values.data();
    std::size_t i = 0;
    for (; i + 4 <= n; i += 4) step(m0, v[i]), step(m1, v[i + 1]), step(m2, v[i + 2]), step(m3, v[i + 3]);
    for (; i < n; ++i) step(m0, v[i]);
    if (!finite) throw Error("values too large: the spectrum holds a value that is not a finite number on the 1 nm grid (resampling overflowed)");
    const double largest = std::max(std::max(m0, m1), std::max(m2, m3));
    if (largest <= kRescaleAbove) {
        Assessment a = assess_finite(s, options);
        add_efficacy(a, s);
        require_finite(a);
        return a;
    }
    // Relative figures from the spectrum scaled to 1; X, Y, Z (which scale with the spectrum) are
    // scaled back, never silently changed: if they overflow the spectrum is rejected.
    Assessment a = assess_finite(scaled(s, 1.0 / largest), options);
    a.name = s.name;
    a.xyz = XYZ{a.xyz.X * largest, a.xyz.Y * largest, a.xyz.Z * largest};
    if (a.luminous_flux_lm) a.luminous_flux_lm = *a.luminous_flux_lm * largest;
    add_efficacy(a, s);
    require_finite(a);
    return a;
}

Assessment assess_sampled(const SampledSpectrum& s, AssessOptions options) {
    options.cie224_interval_nm = cie224_interval_for(s.wavelengths_nm);
    return assess(resample_to_1nm(s), options);
}

Assessment assess_sampled(SampledSpectrum&& s, AssessOptions options) {
    options.cie224_interval_nm = cie224_interval_for(s.wavelengths_nm);
    return assess(resample_to_1nm(std::move(s)), options);
}

}  // namespace lampwright
