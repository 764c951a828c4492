#include "lampwright/colour/illuminants.hpp"

#include "lampwright/colour/cie_tables.hpp"
#include "lampwright/core/error.hpp"

#include <fmt/format.h>

#include <cmath>

namespace lampwright {

double planck_relative(double wavelength_nm, double temperature_K) {
    const double l = wavelength_nm * 1e-9;
    const double l2 = l * l;
    // l^5 by multiplication (std::pow is the slower part of building the locus tables).
    return 1.0 / (l2 * l2 * l * std::expm1(kC2 / (l * temperature_K)));
}

Spectrum planckian(double temperature_K, int first_nm, int last_nm) {
    Spectrum s{fmt::format("Planck {:g} K", temperature_K), first_nm, {}};
    const double norm = planck_relative(560.0, temperature_K);
    for (int nm = first_nm; nm <= last_nm; ++nm) s.values.push_back(planck_relative(nm, temperature_K) / norm);
    return s;
}

Chromaticity daylight_chromaticity(double t, bool allow_extrapolation) {
    if (!allow_extrapolation && (t < 4000.0 || t > 25000.0))
        throw Error(fmt::format("CIE daylight is defined for 4000-25000 K, not {:g} K", t));
    double x;
    if (t <= 7000.0)
        x = -4.6070e9 / (t * t * t) + 2.9678e6 / (t * t) + 0.09911e3 / t + 0.244063;
    else
        x = -2.0064e9 / (t * t * t) + 1.9018e6 / (t * t) + 0.24748e3 / t + 0.237040;
    return {x, -3.000 * x * x + 2.870 * x - 0.275};
}

DaylightWeights daylight_weights(const Chromaticity& p, bool round_weights) {
    const double m = 0.0241 + 0.2562 * p.x - 0.7341 * p.y;
    const double m1 = (-1.3515 - 1.7703 * p.x + 5.9114 * p.y) / m;
    const double m2 = (0.0300 - 31.4424 * p.x + 30.0717 * p.y) / m;
    if (!round_weights) return {m1, m2};
    return {std::round(m1 * 1000.0) / 1000.0, std::round(m2 * 1000.0) / 1000.0};
}

Spectrum daylight(double cct_K, bool allow_extrapolation, bool round_weights) {
    const auto w = daylight_weights(daylight_chromaticity(cct_K, allow_extrapolation), round_weights);
    const auto& s = daylight_components();
    Spectrum d{fmt::format("CIE daylight {:g} K", cct_K), s[0].first_nm, s[0].values};
    for (std::size_t i = 0; i < d.values.size(); ++i) d.values[i] += w.m1 * s[1].values[i] + w.m2 * s[2].values[i];
    return d;
}

Spectrum cie_illuminant_a() {
    Spectrum a{"CIE A", 300, {}};
    const double c = 1.435e7;  // nm K, the value in the definition of illuminant A
    for (int nm = 300; nm <= 830; ++nm)
        a.values.push_back(100.0 * std::pow(560.0 / nm, 5) * std::expm1(c / (2848.0 * 560.0)) / std::expm1(c / (2848.0 * nm)));
    return a;
}

}  // namespace lampwright
