#include "lampwright/assessment.hpp"

#include <fmt/format.h>

#include <array>

namespace lampwright {

Assessment assess(const Spectrum& s, const AssessOptions& options) {
    Assessment a;
    a.name = s.name;
    a.observer = options.observer;
    std::array<double, kColourSize> values;
    colour_range_values(s, values.data());

    const SampleTristimuli tri = cie133_tristimuli(values.data());
    const XYZ xyz2{tri[0], tri[1], tri[2]};
    a.xyz = options.observer == Observer::cie1931_2deg ? xyz2 : tristimulus_colour_range(values.data(), options.observer);
    a.xy = chromaticity(a.xyz);
    a.uv_prime = uv_1976(a.xyz);
    a.uv1960 = uv_1960(xyz2);
    a.ler_lm_per_W = kKm * xyz2.Y / radiant_integral(s);

    a.cct = correlated_colour_temperature(a.uv1960, options.cct_method);
    if (a.cct.valid) {
        a.rendering = colour_rendering_from_tristimuli(tri, a.cct.cct_K);
        if (!a.rendering->within_validity())
            a.warnings.push_back(fmt::format("the source is {:.4f} from its reference illuminant in CIE 1960 uv, beyond the "
                                             "CIE 13.3 limit of {:.4f}: colour rendering indices are indicative only",
                                             a.rendering->dc, kCie133MaxDc));
    } else {
        a.warnings.push_back(a.cct.problem + "; colour rendering not computed");
    }
    if (options.spectral_features) a.features = spectral_features(s, chromaticity(xyz2));
    return a;
}

}  // namespace lampwright
