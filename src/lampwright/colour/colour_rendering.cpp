#include "lampwright/colour/colour_rendering.hpp"

#include "lampwright/colour/cie_tables.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/colour/illuminants.hpp"
#include "lampwright/colour/precomputed_tables.hpp"
#include "lampwright/core/spectral_weights.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <span>
#include <vector>

namespace lampwright {

namespace {

using Tristimuli = SampleTristimuli;

// Sample reflectance x colour-matching function products, built once (CIE 1931 observer).
const SpectralWeights<48>& weights() {
    static const SpectralWeights<48> w = [] {
        SpectralWeights<48> m;
        const auto& cmf = colour_matching_functions(Observer::cie1931_2deg);
        const auto& tcs = cie133_test_samples();
        for (int k = 0; k < 3; ++k)
            for (int j = 0; j < kColourSize; ++j) {
                m.at(k, j) = cmf.xyz[k][j];
                for (int i = 0; i < 14; ++i) m.at(3 + 3 * i + k, j) = tcs[i][j] * cmf.xyz[k][j];
            }
        return m;
    }();
    return w;
}

Tristimuli scaled(const Tristimuli& t, double f) {
    Tristimuli r;
    for (std::size_t i = 0; i < r.size(); ++i) r[i] = t[i] * f;
    return r;
}

struct CieUV {
    double u, v;
};
CieUV uv_at(const Tristimuli& t, int row) {
    const double d = t[row] + 15 * t[row + 1] + 3 * t[row + 2];
    return {4 * t[row] / d, 6 * t[row + 1] / d};
}
// CIE 13.3 eq. (3): c and d of the von Kries transformation in CIE 1960 uv.
double von_kries_c(CieUV p) { return (4 - p.u - 10 * p.v) / p.v; }
double von_kries_d(CieUV p) { return (1.708 * p.v + 0.404 - 1.481 * p.u) / p.v; }

// What colour rendering needs of a reference illuminant (CIE 13.3 eqs. 3 and 5): its white in
// CIE 1960 uv with von Kries c, d, and per sample W*_r and the U*_r, V*_r of eq. (5).
constexpr std::size_t kUvwRow = 4 + 3 * 14;
using ReferenceUvw = std::array<double, kUvwRow>;  // u, v, c, d of the white; then W*, U*, V* of TCS01..14
ReferenceUvw reference_uvw(const Tristimuli& ref) {
    ReferenceUvw r;
    const CieUV wr = uv_at(ref, 0);
    r[0] = wr.u, r[1] = wr.v, r[2] = von_kries_c(wr), r[3] = von_kries_d(wr);
    for (int i = 0; i < 14; ++i) {
        const int row = 3 + 3 * i;
        const CieUV sr = uv_at(ref, row);
        const double yr = 100 * ref[row + 1] / ref[1];
        const double w_r = 25 * std::cbrt(yr) - 17;
        r[4 + 3 * i] = w_r;
        r[5 + 3 * i] = 13 * w_r * (sr.u - wr.u);
        r[6 + 3 * i] = 13 * w_r * (sr.v - wr.v);
    }
    return r;
}

// The Planckian references' ReferenceUvw on a 1-mired grid over 1000-5000 K (from their sample
// tristimuli, white scaled to Y = 1), interpolated with 4-point Lagrange polynomials (error
// < 1e-7 relative): no Planck sum, chromaticity or cube root of the reference per evaluation.
constexpr double kMiredFirst = 1e6 / kCie133DaylightFromK - 2.0;
constexpr double kMiredLast = 1000.0 + 2.0;

// kUvwRow values a mired from kMiredFirst (generated at build time, see precomputed_tables.hpp).
std::span<const double> planck_reference_table() {
    static std::vector<double> store;
    static const std::span<const double> table =
        precomputed::computed_unless_generated(precomputed::cie133_planck_reference(), store, compute_cie133_planck_reference_table);
    return table;
}

ReferenceUvw planck_reference(double cct_K) {
    const auto table = planck_reference_table();
    const double pos = 1e6 / cct_K - kMiredFirst;
    const int i = std::clamp(static_cast<int>(std::floor(pos)), 1, static_cast<int>(table.size() / kUvwRow) - 3);
    const double x = pos - i;  // nodes at -1, 0, 1, 2 relative to i
    const double w0 = -x * (x - 1) * (x - 2) / 6, w1 = (x + 1) * (x - 1) * (x - 2) / 2;
    const double w2 = -(x + 1) * x * (x - 2) / 2, w3 = (x + 1) * x * (x - 1) / 6;
    const double* r0 = table.data() + (i - 1) * kUvwRow;
    ReferenceUvw r;
    for (std::size_t k = 0; k < r.size(); ++k) r[k] = w0 * r0[k] + w1 * r0[kUvwRow + k] + w2 * r0[2 * kUvwRow + k] + w3 * r0[3 * kUvwRow + k];
    return r;
}

// Daylight reference: S0 + M1 S1 + M2 S2 is linear, so its tristimuli are too.
const std::array<Tristimuli, 3>& daylight_component_tristimuli() {
    static const std::array<Tristimuli, 3> comps = [] {
        std::array<Tristimuli, 3> c;
        for (int k = 0; k < 3; ++k) {
            const auto v = colour_range_values(daylight_components()[k]);
            c[k] = weights().apply(v.data());
        }
        return c;
    }();
    return comps;
}

// Not tabulated: CIE 15:2004 rounds M1, M2 to three decimals, so the daylight reference is not
// smooth in mired.
Tristimuli daylight_reference(double cct_K) {
    // Above 25000 K the CIE daylight formula is extrapolated (CIE 13.3 gives no other reference).
    const auto w = daylight_weights(daylight_chromaticity(cct_K, true));
    const auto& c = daylight_component_tristimuli();
    Tristimuli r;
    for (std::size_t k = 0; k < r.size(); ++k) r[k] = c[0][k] + w.m1 * c[1][k] + w.m2 * c[2][k];
    return r;
}

}  // namespace

SampleTristimuli cie133_tristimuli(const double* colour_range_values) { return weights().apply(colour_range_values); }

std::vector<double> compute_cie133_planck_reference_table() {
    std::vector<double> t;
    for (double m = kMiredFirst; m <= kMiredLast + 1e-9; m += 1.0) {
        const auto p = colour_range_values(planckian(1e6 / m));
        const Tristimuli r = weights().apply(p.data());
        const ReferenceUvw uvw = reference_uvw(scaled(r, 1.0 / r[1]));
        t.insert(t.end(), uvw.begin(), uvw.end());
    }
    return t;
}


ColourRendering colour_rendering_from_tristimuli(const SampleTristimuli& test, double cct_K) {
    if (!(cct_K > 0)) throw Error("colour rendering needs a valid CCT");
    ColourRendering out;
    out.reference_cct_K = cct_K;
    out.reference = cct_K < kCie133DaylightFromK ? ReferenceIlluminant::planckian : ReferenceIlluminant::daylight;
    const ReferenceUvw ref = out.reference == ReferenceIlluminant::planckian ? planck_reference(cct_K) : reference_uvw(daylight_reference(cct_K));

    const CieUV wk = uv_at(test, 0), wr{ref[0], ref[1]};
    out.dc = std::hypot(wk.u - wr.u, wk.v - wr.v);
    const double ck = von_kries_c(wk), dk = von_kries_d(wk), cr = ref[2], dr = ref[3];
    const double cf = cr / ck, df = dr / dk;
    // CIE 13.3 eq. (4): the adapted test white (equals the reference white, up to rounding).
    const double denom_w = 16.518 + 1.481 * cf * ck - df * dk;
    const double uw = (10.872 + 0.404 * cf * ck - 4 * df * dk) / denom_w, vw = 5.520 / denom_w;

    double sum8 = 0;
    for (int i = 0; i < 14; ++i) {
        const int row = 3 + 3 * i;
        const CieUV sk = uv_at(test, row);
        const double yk = 100 * test[row + 1] / test[1];
        const double ci = von_kries_c(sk), di = von_kries_d(sk);
        const double denom = 16.518 + 1.481 * cf * ci - df * di;
        const double uk = (10.872 + 0.404 * cf * ci - 4 * df * di) / denom, vk = 5.520 / denom;
        // CIE 13.3 eq. (5): CIE 1964 U*V*W* (the reference's from reference_uvw).
        const double w_k = 25 * std::cbrt(yk) - 17, w_r = ref[4 + 3 * i];
        const double du = 13 * w_k * (uk - uw) - ref[5 + 3 * i];
        const double dv = 13 * w_k * (vk - vw) - ref[6 + 3 * i];
        const double de = std::sqrt(du * du + dv * dv + (w_k - w_r) * (w_k - w_r));
        out.ri[i] = 100 - 4.6 * de;  // CIE 13.3 eq. (6)
        if (i < 8) sum8 += out.ri[i];
    }
    out.ra = sum8 / 8;  // CIE 13.3 eq. (7)
    return out;
}

ColourRendering colour_rendering(const Spectrum& s, double cct_K) {
    const auto v = colour_range_values(s);
    return colour_rendering_from_tristimuli(cie133_tristimuli(v.data()), cct_K);
}


}  // namespace lampwright
