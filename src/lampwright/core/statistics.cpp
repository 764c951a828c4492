#include "lampwright/core/statistics.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

namespace lampwright {

double mean(const std::vector<double>& v) {
    return v.empty() ? NAN : std::accumulate(v.begin(), v.end(), 0.0) / static_cast<double>(v.size());
}

double sample_sd(const std::vector<double>& v) {
    if (v.size() < 2) return NAN;
    const double m = mean(v);
    double s = 0;
    for (double x : v) s += (x - m) * (x - m);
    return std::sqrt(s / static_cast<double>(v.size() - 1));
}

double quantile_sorted(const std::vector<double>& sorted, double p) {
    if (sorted.empty()) return NAN;
    const double h = p * static_cast<double>(sorted.size() - 1);
    const auto lo = static_cast<std::size_t>(std::floor(h));
    const std::size_t hi = std::min(lo + 1, sorted.size() - 1);
    return sorted[lo] + (h - static_cast<double>(lo)) * (sorted[hi] - sorted[lo]);
}

double median(std::vector<double> v) {
    std::sort(v.begin(), v.end());
    return quantile_sorted(v, 0.5);
}

}  // namespace lampwright
