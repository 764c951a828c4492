#include "lampwright/colour/colorimetry.hpp"

#include <algorithm>
#include <numeric>
#include <vector>

namespace lampwright {

XYZ tristimulus_colour_range(const double* values, Observer observer) {
    const auto& cmf = colour_matching_functions(observer);
    XYZ r;
    r.X = std::inner_product(values, values + kColourSize, cmf.xyz[0].data(), 0.0);
    r.Y = std::inner_product(values, values + kColourSize, cmf.xyz[1].data(), 0.0);
    r.Z = std::inner_product(values, values + kColourSize, cmf.xyz[2].data(), 0.0);
    return r;
}

XYZ tristimulus(const Spectrum& s, Observer observer) {
    const auto v = colour_range_values(s);
    return tristimulus_colour_range(v.data(), observer);
}

Chromaticity chromaticity(const XYZ& c) {
    const double sum = c.X + c.Y + c.Z;
    return {c.X / sum, c.Y / sum};
}

UV uv_1960(const XYZ& c) {
    const double d = c.X + 15 * c.Y + 3 * c.Z;
    return {4 * c.X / d, 6 * c.Y / d};
}

UV uv_1976(const XYZ& c) {
    const double d = c.X + 15 * c.Y + 3 * c.Z;
    return {4 * c.X / d, 9 * c.Y / d};
}

UV uv_1960_from_xy(const Chromaticity& p) {
    const double d = -2 * p.x + 12 * p.y + 3;
    return {4 * p.x / d, 6 * p.y / d};
}

UV uv_1976_from_xy(const Chromaticity& p) {
    const double d = -2 * p.x + 12 * p.y + 3;
    return {4 * p.x / d, 9 * p.y / d};
}

Chromaticity xy_from_uv_1960(const UV& p) {
    const double d = 2 * p.u - 8 * p.v + 4;
    return {3 * p.u / d, 2 * p.v / d};
}

Chromaticity xy_from_uv_1976(const UV& p) {
    const double d = 6 * p.u - 16 * p.v + 12;
    return {9 * p.u / d, 4 * p.v / d};
}

double luminous_efficacy_of_radiation(const Spectrum& s) {
    return kKm * tristimulus(s).Y / radiant_integral(s);
}

double luminous_flux_lm(const Spectrum& s) {
    const auto& v = colour_matching_functions(Observer::cie1931_2deg).xyz[1];
    const int first = std::max(s.first_nm, kColourFirstNm), last = std::min(s.last_nm(), kColourLastNm);
    if (first > last) return 0.0;
    std::vector<double> sv(static_cast<std::size_t>(last - first + 1));
    for (int nm = first; nm <= last; ++nm)
        sv[static_cast<std::size_t>(nm - first)] = s.values[static_cast<std::size_t>(nm - s.first_nm)] * v[static_cast<std::size_t>(nm - kColourFirstNm)];
    return kKm * integrate_1nm(sv);
}

}  // namespace lampwright
