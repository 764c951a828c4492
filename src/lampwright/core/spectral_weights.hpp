#pragma once
// Many weighted sums of one spectrum at once: out[r] = sum_j W[r][j] * s[j] over the 1 nm colour
// range. Tables of weights (colour-matching function x sample reflectance products) are built once;
// the kernel walks the spectrum once and keeps every sum in registers (compiled for AVX2/FMA where
// the processor has it, with a plain fallback).
#include "lampwright/core/spectrum.hpp"

#include <array>
#include <vector>

namespace lampwright {

template <int Rows>
class SpectralWeights {
public:
    static_assert(Rows % 8 == 0, "rows are padded to whole AVX blocks");
    SpectralWeights() : w_(static_cast<std::size_t>(Rows) * kColourSize, 0.0) {}
    double& at(int row, int j) { return w_[static_cast<std::size_t>(j) * Rows + row]; }
    // values: kColourSize values on 360-830 nm.
    std::array<double, Rows> apply(const double* values) const;

private:
    std::vector<double> w_;  // column-major: all rows of one wavelength together
};

void weighted_sums_48(const double* weights, const double* values, int n, double* out);
// Many blocks of 48 rows over the same n values: block b's weights are the n x 48 column-major
// array at weights + b * n * 48, its sums go to out[48 b .. 48 b + 47]. The weights are stored as
// float (half the memory, so a large table stays in the core's cache); the sums are double.
void weighted_sums_48_blocks(const float* weights, const double* values, int n, int blocks, double* out);

template <>
inline std::array<double, 48> SpectralWeights<48>::apply(const double* values) const {
    std::array<double, 48> out;
    weighted_sums_48(w_.data(), values, kColourSize, out.data());
    return out;
}

}  // namespace lampwright
