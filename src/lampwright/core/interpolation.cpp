#include "lampwright/core/interpolation.hpp"

#include "lampwright/core/error.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>

namespace lampwright {

namespace {
// Values above this are interpolated scaled (resample_to_1nm); below it the interpolation cannot
// overflow (its coefficients are below 1e3) and the values are used as they are, bit for bit.
constexpr double kScaleValuesAbove = 1e250;
}  // namespace

bool is_uniformly_spaced(const std::vector<double>& x) {
    if (x.size() < 2) return false;
    const double step = (x.back() - x.front()) / static_cast<double>(x.size() - 1);
    for (std::size_t i = 1; i < x.size(); ++i)
        if (std::abs((x[i] - x[i - 1]) - step) > 1e-6 * step) return false;
    return true;
}

namespace {

// CIE 167:2005, Table 2: two extra points at each end from the six nearest.
std::vector<double> sprague_extended(const std::vector<double>& f) {
    const std::size_t n = f.size();
    std::vector<double> e(n + 4);
    std::copy(f.begin(), f.end(), e.begin() + 2);
    e[0] = (884 * f[0] - 1960 * f[1] + 3033 * f[2] - 2648 * f[3] + 1080 * f[4] - 180 * f[5]) / 209;
    e[1] = (508 * f[0] - 540 * f[1] + 488 * f[2] - 367 * f[3] + 144 * f[4] - 24 * f[5]) / 209;
    e[n + 2] = (-24 * f[n - 6] + 144 * f[n - 5] - 367 * f[n - 4] + 488 * f[n - 3] - 540 * f[n - 2] +
                508 * f[n - 1]) / 209;
    e[n + 3] = (-180 * f[n - 6] + 1080 * f[n - 5] - 2648 * f[n - 4] + 3033 * f[n - 3] -
                1960 * f[n - 2] + 884 * f[n - 1]) / 209;
    return e;
}

// CIE 167:2005, eq. (3): quintic through f[-2..3] for 0 <= x <= 1 between f[0] and f[1].
double sprague_segment(const double* f, double x) {
    const double fm2 = f[0], fm1 = f[1], f0 = f[2], f1 = f[3], f2 = f[4], f3 = f[5];
    const double a0 = f0;
    const double a1 = (2 * fm2 - 16 * fm1 + 16 * f1 - 2 * f2) / 24;
    const double a2 = (-fm2 + 16 * fm1 - 30 * f0 + 16 * f1 - f2) / 24;
    const double a3 = (-9 * fm2 + 39 * fm1 - 70 * f0 + 66 * f1 - 33 * f2 + 7 * f3) / 24;
    const double a4 = (13 * fm2 - 64 * fm1 + 126 * f0 - 124 * f1 + 61 * f2 - 12 * f3) / 24;
    const double a5 = (-5 * fm2 + 25 * fm1 - 50 * f0 + 50 * f1 - 25 * f2 + 5 * f3) / 24;
    return a0 + x * (a1 + x * (a2 + x * (a3 + x * (a4 + x * a5))));
}

}  // namespace

std::vector<double> sprague_interpolate(double x0, double step, const std::vector<double>& y,
                                        const std::vector<double>& x_out) {
    if (y.size() < 6) throw Error("Sprague interpolation needs at least 6 points");
    const auto e = sprague_extended(y);
    const std::size_t last_segment = y.size() - 2;
    // A whole-number step s (5 nm data onto 1 nm): the positions inside a segment repeat as
    // r / s, so the quintic's weights on its six points are computed once per r (from
    // sprague_segment on unit vectors: it is linear in the points) instead of per output.
    const bool whole_step = step >= 2 && step <= 50 && step == std::floor(step);
    const int s = whole_step ? static_cast<int>(step) : 0;
    std::vector<std::array<double, 6>> weights(static_cast<std::size_t>(s));
    for (int r = 1; r < s; ++r)
        for (int m = 0; m < 6; ++m) {
            double unit[6] = {0, 0, 0, 0, 0, 0};
            unit[m] = 1;
            weights[static_cast<std::size_t>(r)][static_cast<std::size_t>(m)] = sprague_segment(unit, static_cast<double>(r) / s);
        }
    const auto segment = [&](std::size_t i, double frac) {
        if (whole_step) {
            const double rs = std::round(frac * s);
            if (rs >= 1 && rs < s && std::abs(frac - rs / s) < 1e-12) {
                const auto& w = weights[static_cast<std::size_t>(rs)];
                const double* f = &e[i];
                return w[0] * f[0] + w[1] * f[1] + w[2] * f[2] + w[3] * f[3] + w[4] * f[4] + w[5] * f[5];
            }
        }
        return sprague_segment(&e[i], frac);
    };
    std::vector<double> out(x_out.size());
    for (std::size_t k = 0; k < x_out.size(); ++k) {
        const double t = (x_out[k] - x0) / step;
        if (!std::isfinite(t)) throw Error("Sprague interpolation at a non-finite position");
        const double seg = std::floor(t + 1e-9);
        std::size_t i = static_cast<std::size_t>(std::clamp(seg, 0.0, static_cast<double>(last_segment)));
        const double frac = std::clamp(t - static_cast<double>(i), 0.0, 1.0);
        out[k] = (std::abs(frac) < 1e-12) ? y[i] : (std::abs(frac - 1) < 1e-12 ? y[i + 1] : segment(i, frac));
    }
    return out;
}

std::vector<double> pchip_interpolate(const std::vector<double>& x, const std::vector<double>& y,
                                      const std::vector<double>& x_out) {
    const std::size_t n = x.size();
    std::vector<double> h(n - 1), delta(n - 1), d(n, 0.0);
    for (std::size_t i = 0; i + 1 < n; ++i) {
        h[i] = x[i + 1] - x[i];
        delta[i] = (y[i + 1] - y[i]) / h[i];
    }
    if (n == 2) {
        d[0] = d[1] = delta[0];
    } else {
        for (std::size_t i = 1; i + 1 < n; ++i) {
            if (delta[i - 1] * delta[i] > 0) {  // Fritsch-Butland weighted harmonic mean
                const double w1 = 2 * h[i] + h[i - 1], w2 = h[i] + 2 * h[i - 1];
                d[i] = (w1 + w2) / (w1 / delta[i - 1] + w2 / delta[i]);
            }
        }
        // Three-point end slopes, limited to keep monotonicity (as in Moler, Numerical Computing with MATLAB, 3.4).
        auto end_slope = [](double h0, double h1, double d0, double d1) {
            double s = ((2 * h0 + h1) * d0 - h0 * d1) / (h0 + h1);
            if (s * d0 <= 0) s = 0;
            else if (d0 * d1 <= 0 && std::abs(s) > std::abs(3 * d0)) s = 3 * d0;
            return s;
        };
        d[0] = end_slope(h[0], h[1], delta[0], delta[1]);
        d[n - 1] = end_slope(h[n - 2], h[n - 3], delta[n - 2], delta[n - 3]);
    }
    std::vector<double> out(x_out.size());
    for (std::size_t k = 0; k < x_out.size(); ++k) {
        const double xv = std::clamp(x_out[k], x.front(), x.back());
        std::size_t i = static_cast<std::size_t>(std::upper_bound(x.begin(), x.end(), xv) - x.begin());
        i = std::clamp<std::size_t>(i, 1, n - 1) - 1;
        const double t = (xv - x[i]) / h[i];
        const double t2 = t * t, t3 = t2 * t;
        out[k] = (2 * t3 - 3 * t2 + 1) * y[i] + (t3 - 2 * t2 + t) * h[i] * d[i] + (-2 * t3 + 3 * t2) * y[i + 1] +
                 (t3 - t2) * h[i] * d[i + 1];
    }
    return out;
}

namespace {

// Whether the wavelengths are the whole numbers first, first + 1, ..., last.
bool on_1nm_grid(const std::vector<double>& x, int first, int last) {
    bool on_grid = static_cast<double>(last - first + 1) == static_cast<double>(x.size());
    for (std::size_t i = 0; on_grid && i < x.size(); ++i) on_grid = x[i] == static_cast<double>(first) + static_cast<double>(i);
    return on_grid;
}

}  // namespace

Spectrum resample_to_1nm(SampledSpectrum&& s) {
    const auto& x = s.wavelengths_nm;
    if (x.size() >= 2 && x.front() >= kMinGridNm && x.back() <= kMaxGridNm && x.front() < x.back()) {
        const int first = static_cast<int>(std::ceil(x.front() - 1e-9));
        const int last = static_cast<int>(std::floor(x.back() + 1e-9));
        if (on_1nm_grid(x, first, last)) {
            // Every interpolant passes through the data points: the values are the answer.
            Spectrum out{s.name, first, std::move(s.values)};
            out.absolute = s.absolute;
            out.electrical_power_W = s.electrical_power_W;
            return out;
        }
    }
    return resample_to_1nm(static_cast<const SampledSpectrum&>(s));
}

Spectrum resample_to_1nm(const SampledSpectrum& s) {
    const auto& x = s.wavelengths_nm;
    if (x.size() < 2) throw Error("spectrum '" + s.name + "' has fewer than two points");
    // Checked before any conversion to int (out of range it is undefined behaviour) and before the
    // grid is built (its size is last - first + 1 points). The readers refuse such files with
    // the line; this guards spectra built in code.
    if (!(x.front() >= kMinGridNm && x.back() <= kMaxGridNm && x.front() < x.back()))
        throw Error(fmt::format("spectrum '{}' runs {:g}-{:g} nm; wavelengths must lie within {:g}-{:g} nm and increase", s.name, x.front(), x.back(),
                                kMinGridNm, kMaxGridNm));
    const int first = static_cast<int>(std::ceil(x.front() - 1e-9));
    const int last = static_cast<int>(std::floor(x.back() + 1e-9));
    Spectrum out{s.name, first, {}};
    out.absolute = s.absolute;
    out.electrical_power_W = s.electrical_power_W;
    // Already on the 1 nm grid: every interpolant here passes through the data points, so the
    // values are the answer (a copy, no arithmetic; the && overload takes them over instead).
    if (on_1nm_grid(x, first, last)) {
        out.values = s.values;
        return out;
    }
    std::vector<double> grid;
    for (int nm = first; nm <= last; ++nm) grid.push_back(nm);
    // Huge finite values (a file in odd units, 1e306 and up) would overflow inside the
    // interpolation: Sprague's end extension multiplies them by up to 3033/209 (CIE 167:2005,
    // Table 2) and pchip divides differences by steps under 1 nm. Both are linear in the values,
    // so the values are interpolated scaled by a power of two (exact: only the exponent changes)
    // and scaled back; only a result truly beyond the largest double is refused.
    double largest = 0;
    for (double v : s.values) largest = std::max(largest, std::abs(v));
    int exponent = 0;
    if (largest > kScaleValuesAbove) (void)std::frexp(largest, &exponent);
    std::vector<double> y = s.values;
    if (exponent != 0)
        for (double& v : y) v = std::ldexp(v, -exponent);
    if (is_uniformly_spaced(x) && x.size() >= 6) {
        const double step = (x.back() - x.front()) / static_cast<double>(x.size() - 1);
        out.values = sprague_interpolate(x.front(), step, y, grid);
    } else {
        out.values = pchip_interpolate(x, y, grid);
    }
    if (exponent != 0) {
        for (double& v : out.values) v = std::ldexp(v, exponent);
        for (std::size_t i = 0; i < out.values.size(); ++i)
            if (!std::isfinite(out.values[i]))
                throw Error(fmt::format("spectrum '{}': the interpolated value at {} nm exceeds the largest number a double holds (values up to {:g}); "
                                        "rescale the file",
                                        s.name, first + static_cast<int>(i), largest));
    }
    return out;
}

double interpolate_linear(const std::vector<double>& x, const std::vector<double>& y, double at) {
    if (x.empty()) return 0.0;
    if (at <= x.front()) return y.front();
    if (at >= x.back()) return y.back();
    const auto i = static_cast<std::size_t>(std::upper_bound(x.begin(), x.end(), at) - x.begin());
    const double t = (at - x[i - 1]) / (x[i] - x[i - 1]);
    return y[i - 1] + t * (y[i] - y[i - 1]);
}

}  // namespace lampwright
