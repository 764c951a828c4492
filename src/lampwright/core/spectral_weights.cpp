#include "lampwright/core/spectral_weights.hpp"

namespace lampwright {

// Each output has its own accumulator, so vectorising over rows needs no reordering of sums.
__attribute__((target_clones("arch=x86-64-v3", "default")))
void weighted_sums_48(const double* __restrict weights, const double* __restrict values, int n, double* __restrict out) {
    double acc[48] = {};
    for (int j = 0; j < n; ++j) {
        const double s = values[j];
        const double* col = weights + static_cast<std::size_t>(j) * 48;
        for (int r = 0; r < 48; ++r) acc[r] += col[r] * s;
    }
    for (int r = 0; r < 48; ++r) out[r] = acc[r];
}

namespace {
__attribute__((target_clones("arch=x86-64-v3", "default")))
void weighted_sums_48_float(const float* __restrict weights, const double* __restrict values, int n, double* __restrict out) {
    double acc[48] = {};
    for (int j = 0; j < n; ++j) {
        const double s = values[j];
        const float* col = weights + static_cast<std::size_t>(j) * 48;
        for (int r = 0; r < 48; ++r) acc[r] += static_cast<double>(col[r]) * s;
    }
    for (int r = 0; r < 48; ++r) out[r] = acc[r];
}
}  // namespace

void weighted_sums_48_blocks(const float* weights, const double* values, int n, int blocks, double* out) {
    for (int b = 0; b < blocks; ++b) weighted_sums_48_float(weights + static_cast<std::size_t>(b) * n * 48, values, n, out + 48 * b);
}

}  // namespace lampwright
