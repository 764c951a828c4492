#include "lampwright/core/spectrum.hpp"

#include <cmath>

#include <algorithm>

namespace lampwright {

double Spectrum::at_nearest(int nm) const {
    if (values.empty()) return 0.0;
    const int i = std::clamp(nm - first_nm, 0, static_cast<int>(values.size()) - 1);
    return values[static_cast<std::size_t>(i)];
}

void colour_range_values(const Spectrum& s, double* out) {
    for (int nm = kColourFirstNm; nm <= kColourLastNm; ++nm) out[nm - kColourFirstNm] = s.at_nearest(nm);
}

std::vector<double> colour_range_values(const Spectrum& s) {
    std::vector<double> v(kColourSize);
    colour_range_values(s, v.data());
    return v;
}

double integrate_1nm(const double* values, std::size_t n) {
    double sum = 0.0;
    for (std::size_t i = 0; i < n; ++i) sum += values[i];
    return sum * 1.0;  // delta lambda = 1 nm
}

double radiant_integral(const Spectrum& s) { return integrate_1nm(s.values); }

Spectrum scaled(const Spectrum& s, double factor) {
    Spectrum r = s;
    for (auto& v : r.values) v *= factor;
    return r;
}

void add_line(Spectrum& s, double nm, double power) {
    const double lo = std::floor(nm);
    const double t = nm - lo;
    const auto add = [&](double w, double p) {
        if (w >= s.first_nm && w <= s.last_nm()) s.values[static_cast<std::size_t>(static_cast<int>(w) - s.first_nm)] += p;
    };
    if (!(lo >= s.first_nm - 1 && lo <= s.last_nm())) return;
    add(lo, power * (1 - t));
    add(lo + 1, power * t);
}

}  // namespace lampwright
