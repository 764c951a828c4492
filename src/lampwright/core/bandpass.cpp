#include "lampwright/core/bandpass.hpp"

#include "lampwright/core/error.hpp"

#include <fmt/format.h>

#include <cstdlib>

namespace lampwright {

Spectrum triangular_bandpass(const Spectrum& s, int bandwidth_nm) {
    if (bandwidth_nm < 1 || bandwidth_nm > 100) throw Error(fmt::format("bandwidth must be 1-100 nm, not {}", bandwidth_nm));
    if (bandwidth_nm == 1) return s;
    // Triangle of FWHM b on a 1 nm grid: weights (b - |k|) / b^2 for |k| < b, summing to one.
    const int b = bandwidth_nm;
    const double norm = 1.0 / (static_cast<double>(b) * b);
    Spectrum out{s.name, s.first_nm, std::vector<double>(s.values.size(), 0.0)};
    const auto n = static_cast<int>(s.values.size());
    for (int i = 0; i < n; ++i) {
        double v = 0;
        for (int k = -(b - 1); k <= b - 1; ++k) {
            const int j = i + k;
            if (j >= 0 && j < n) v += (b - std::abs(k)) * s.values[static_cast<std::size_t>(j)];
        }
        out.values[static_cast<std::size_t>(i)] = v * norm;
    }
    return out;
}

std::vector<double> values_at(const Spectrum& s, const std::vector<int>& nm) {
    std::vector<double> out;
    out.reserve(nm.size());
    for (int w : nm) out.push_back(s.covers(w) ? s.values[static_cast<std::size_t>(w - s.first_nm)] : 0.0);
    return out;
}

}  // namespace lampwright
