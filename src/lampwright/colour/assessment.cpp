#include "lampwright/colour/assessment.hpp"

#include "lampwright/core/error.hpp"

#include <fmt/format.h>

#include <array>

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

Assessment assess(const Spectrum& s, const AssessOptions& options) {
    std::array<double, kColourSize> values;
    colour_range_values(s, values.data());
    const SampleTristimuli tri = cie133_tristimuli(values.data());
    Assessment a = assess_from_tristimuli(tri, radiant_integral(s), options.cct_method);
    a.name = s.name;
    a.observer = options.observer;
    if (options.observer != Observer::cie1931_2deg) {
        a.xyz = tristimulus_colour_range(values.data(), options.observer);
        a.xy = chromaticity(a.xyz);
        a.uv_prime = uv_1976(a.xyz);
    }
    if (options.spectral_features) a.features = spectral_features(s, chromaticity(XYZ{tri[0], tri[1], tri[2]}));
    return a;
}

}  // namespace lampwright
