#include "lampwright/colour/colour_fidelity.hpp"

#include "lampwright/colour/illuminants.hpp"
#include "lampwright/colour/precomputed_tables.hpp"
#include "lampwright/colour/temperature.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/core/spectral_weights.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <numbers>
#include <span>
#include <vector>

namespace lampwright {

namespace {

constexpr int kBlocks = kCesTristimulusRows / 48;
static_assert(kBlocks * 48 == kCesTristimulusRows && kBlocks * 48 >= 3 + 3 * kCesCount);
constexpr int kCesOffset = kCesFirstNm - kColourFirstNm;  // 380 nm within the 360-830 nm colour range

constexpr int kCesCoarseSize = (kCesLastNm - kCesFirstNm) / kCie224CoarseIntervalNm + 1;  // 81 nodes at 5 nm

void check_interval(int interval_nm) {
    if (interval_nm != kCie224IntervalNm && interval_nm != kCie224CoarseIntervalNm)
        throw Error(fmt::format("CIE 224 is computed at 1 nm or 5 nm, not {} nm", interval_nm));
}

// CES reflectance x 10-degree colour-matching function products over 380-780 nm at the interval
// (1 nm: every node; 5 nm: every fifth, the 5 nm CES and CMF tables), built once; block-major for
// weighted_sums_48_blocks. Stored as float (relative rounding 6e-8, far below the 5-decimal CES
// and CMF tables) so the 540 kB table stays in the core's L2 cache.
std::vector<float> build_weights(int step) {
    const int n = (kCesSize - 1) / step + 1;
    std::vector<float> m(static_cast<std::size_t>(kCesTristimulusRows) * static_cast<std::size_t>(n), 0.0f);
    const auto at = [&m, n](int row, int j) -> float& {
        return m[(static_cast<std::size_t>(row / 48) * static_cast<std::size_t>(n) + static_cast<std::size_t>(j)) * 48 + static_cast<std::size_t>(row % 48)];
    };
    const auto& cmf = colour_matching_functions(Observer::cie1964_10deg);
    const auto& ces = cie224_colour_evaluation_samples();
    for (int j = 0; j < n; ++j)
        for (int k = 0; k < 3; ++k) {
            const double c = cmf.xyz[k][static_cast<std::size_t>(j * step + kCesOffset)];
            at(k, j) = static_cast<float>(c);
            for (int i = 0; i < kCesCount; ++i)
                at(3 + 3 * i + k, j) = static_cast<float>(ces[static_cast<std::size_t>(i)][static_cast<std::size_t>(j * step)] * c);
        }
    return m;
}

const std::vector<float>& weights(int step) {
    if (step == kCie224CoarseIntervalNm) {
        static const std::vector<float> w5 = build_weights(kCie224CoarseIntervalNm);
        return w5;
    }
    static const std::vector<float> w1 = build_weights(kCie224IntervalNm);
    return w1;
}

CesTristimuli scaled_to_white_100(const CesTristimuli& t) {
    CesTristimuli r;
    const double f = 100 / t[1];
    for (std::size_t i = 0; i < r.size(); ++i) r[i] = t[i] * f;
    return r;
}

using JabSet = std::array<Jab, kCesCount>;

// CAM02-UCS J'a'b' of the 99 samples, the source's own white adopted (CIE 224:2017, 4.4).
JabSet appearance(const CesTristimuli& raw) {
    if (!(raw[1] > 0) || !std::isfinite(raw[1])) throw Error("the spectrum has no power in 380-780 nm: CIE 224 cannot be computed");
    const CesTristimuli t = scaled_to_white_100(raw);
    const Ciecam02 model({t[0], t[1], t[2]}, cie224_viewing_conditions());
    JabSet out;
    for (int i = 0; i < kCesCount; ++i) out[static_cast<std::size_t>(i)] = model.ucs({t[3 + 3 * i], t[4 + 3 * i], t[5 + 3 * i]});
    return out;
}

void check_cct(double cct_K) {
    if (!(cct_K >= kCctMinK && cct_K <= kCctMaxK))
        throw Error(fmt::format("the CIE 224 reference needs a CCT in {:g}-{:g} K, not {:g} K", kCctMinK, kCctMaxK, cct_K));
}

double daylight_share(double cct_K) {
    return std::clamp((cct_K - kCie224PlanckianBelowK) / (kCie224DaylightAboveK - kCie224PlanckianBelowK), 0.0, 1.0);
}

// Daylight's tristimulus sums are linear in S0, S1, S2 (CIE 15:2004, 3.1).
std::array<CesTristimuli, 3> component_tristimuli(int step) {
    std::array<CesTristimuli, 3> out;
    for (int k = 0; k < 3; ++k) {
        const auto v = colour_range_values(daylight_components()[static_cast<std::size_t>(k)]);
        out[static_cast<std::size_t>(k)] = cie224_tristimuli(v.data(), step);
    }
    return out;
}
const std::array<CesTristimuli, 3>& daylight_component_tristimuli(int step) {
    if (step == kCie224CoarseIntervalNm) {
        static const std::array<CesTristimuli, 3> c5 = component_tristimuli(kCie224CoarseIntervalNm);
        return c5;
    }
    static const std::array<CesTristimuli, 3> c1 = component_tristimuli(kCie224IntervalNm);
    return c1;
}

// The reference's tristimulus sums, white scaled to Y10 = 100 (CIE 224:2017, 4.3), at the interval.
CesTristimuli reference_tristimuli(double cct_K, int step = kCie224IntervalNm) {
    const double w = daylight_share(cct_K);
    CesTristimuli planck{}, day{};
    if (w < 1) {
        const auto v = colour_range_values(planckian(cct_K));
        planck = scaled_to_white_100(cie224_tristimuli(v.data(), step));
    }
    if (w > 0) {
        // Unrounded M1, M2 (see daylight_weights); above 25000 K the daylight formula is extrapolated.
        const auto m = daylight_weights(daylight_chromaticity(cct_K, true), false);
        const auto& c = daylight_component_tristimuli(step);
        for (std::size_t k = 0; k < day.size(); ++k) day[k] = c[0][k] + m.m1 * c[1][k] + m.m2 * c[2][k];
        day = scaled_to_white_100(day);
    }
    CesTristimuli r;
    for (std::size_t k = 0; k < r.size(); ++k) r[k] = (1 - w) * planck[k] + w * day[k];
    return r;
}

JabSet reference_jab_direct(double cct_K, int step = kCie224IntervalNm) { return appearance(reference_tristimuli(cct_K, step)); }

// The reference's J'a'b' on every whole mired from 10 (100000 K) to 1000 (1000 K), built once.
// They are smooth in mired except at 4000 K (250 mired) and 5000 K (200 mired), where the
// reference changes kind; both are nodes, and the 4-point Lagrange stencil stays on one side.
constexpr int kMiredFirst = 10, kMiredLast = 1000;
constexpr std::size_t kJabRow = 3 * kCesCount;  // J', a', b' of each sample, a mired
std::span<const double> reference_table() {
    static std::vector<double> store;
    static const std::span<const double> t =
        precomputed::computed_unless_generated(precomputed::cie224_reference_jab(), store, compute_cie224_reference_jab_table);
    return t;
}

JabSet reference_jab_tabulated(double cct_K) {
    const auto table = reference_table();
    const double pos = 1e6 / cct_K - kMiredFirst;
    const int last = static_cast<int>(table.size() / kJabRow) - 1;
    const int i = std::clamp(static_cast<int>(std::floor(pos)), 0, last - 1);
    // The smooth segment [lo, hi] that holds [i, i + 1] (kinks at 200 and 250 mired).
    const int k1 = static_cast<int>(1e6 / kCie224DaylightAboveK) - kMiredFirst, k2 = static_cast<int>(1e6 / kCie224PlanckianBelowK) - kMiredFirst;
    const int lo = i < k1 ? 0 : (i < k2 ? k1 : k2);
    const int hi = i < k1 ? k1 : (i < k2 ? k2 : last);
    const int start = std::clamp(i - 1, lo, hi - 3);
    double w[4];
    for (int a = 0; a < 4; ++a) {
        w[a] = 1;
        for (int b = 0; b < 4; ++b)
            if (b != a) w[a] *= (pos - (start + b)) / static_cast<double>(a - b);
    }
    JabSet r;
    for (std::size_t s = 0; s < r.size(); ++s) {
        Jab v;
        for (int a = 0; a < 4; ++a) {
            const double* n = table.data() + static_cast<std::size_t>(start + a) * kJabRow + 3 * s;
            v.j += w[a] * n[0];
            v.a += w[a] * n[1];
            v.b += w[a] * n[2];
        }
        r[s] = v;
    }
    return r;
}

}  // namespace

double cie224_rf_from_difference(double delta_e) { return 10 * std::log(std::exp((100 - kCie224ScaleFactor * delta_e) / 10) + 1); }

CesTristimuli cie224_tristimuli(const double* colour_range_values, int interval_nm) {
    check_interval(interval_nm);
    CesTristimuli out;
    if (interval_nm == kCie224IntervalNm) {
        weighted_sums_48_blocks(weights(interval_nm).data(), colour_range_values + kCesOffset, kCesSize, kBlocks, out.data());
        return out;
    }
    std::array<double, kCesCoarseSize> nodes;
    for (int j = 0; j < kCesCoarseSize; ++j) nodes[static_cast<std::size_t>(j)] = colour_range_values[kCesOffset + j * interval_nm];
    weighted_sums_48_blocks(weights(interval_nm).data(), nodes.data(), kCesCoarseSize, kBlocks, out.data());
    return out;
}

std::vector<double> compute_cie224_reference_jab_table() {
    std::vector<double> out;
    out.reserve(static_cast<std::size_t>(kMiredLast - kMiredFirst + 1) * kJabRow);
    for (int m = kMiredFirst; m <= kMiredLast; ++m)
        for (const Jab& v : reference_jab_direct(1e6 / m)) out.insert(out.end(), {v.j, v.a, v.b});
    return out;
}

FidelityReference cie224_reference_kind(double cct_K) {
    if (cct_K < kCie224PlanckianBelowK) return FidelityReference::planckian;
    if (cct_K > kCie224DaylightAboveK) return FidelityReference::daylight;
    return FidelityReference::mix;
}

Spectrum cie224_reference_illuminant(double cct_K) {
    check_cct(cct_K);
    const auto& ybar = colour_matching_functions(Observer::cie1964_10deg).xyz[1];
    const auto y10 = [&ybar](const std::vector<double>& v) {
        double y = 0;
        for (int j = 0; j < kCesSize; ++j) y += v[static_cast<std::size_t>(j + kCesOffset)] * ybar[static_cast<std::size_t>(j + kCesOffset)];
        return y;
    };
    const double w = daylight_share(cct_K);
    std::vector<double> out(kColourSize, 0.0);
    if (w < 1) {
        const auto p = colour_range_values(planckian(cct_K));
        const double f = (1 - w) * 100 / y10(p);
        for (int j = 0; j < kColourSize; ++j) out[static_cast<std::size_t>(j)] += f * p[static_cast<std::size_t>(j)];
    }
    if (w > 0) {
        const auto d = colour_range_values(daylight(cct_K, true, false));
        const double f = w * 100 / y10(d);
        for (int j = 0; j < kColourSize; ++j) out[static_cast<std::size_t>(j)] += f * d[static_cast<std::size_t>(j)];
    }
    return Spectrum{fmt::format("CIE 224 reference {:g} K", cct_K), kColourFirstNm, out};
}

ColourFidelity colour_fidelity_from_tristimuli(const CesTristimuli& test, double cct_K, bool tabulated_reference, int interval_nm) {
    check_cct(cct_K);
    check_interval(interval_nm);
    ColourFidelity f;
    f.interval_nm = interval_nm;
    f.reference_cct_K = cct_K;
    f.reference = cie224_reference_kind(cct_K);
    f.daylight_weight = daylight_share(cct_K);
    const JabSet t = appearance(test);
    f.xy10 = chromaticity({test[0], test[1], test[2]});
    const JabSet r = interval_nm != kCie224IntervalNm ? reference_jab_direct(cct_K, interval_nm)
                     : tabulated_reference            ? reference_jab_tabulated(cct_K)
                                                      : reference_jab_direct(cct_K);

    // CIE 224:2017 eqs. 8-10: CAM02-UCS differences, their mean, Rf and Rf per sample.
    std::array<double, kTm30HueBins> sum_de{}, ta{}, tb{}, ra{}, rb{};
    double total = 0;
    const double bin_width = 2 * std::numbers::pi / kTm30HueBins;
    for (std::size_t i = 0; i < t.size(); ++i) {
        const double de = cam02_ucs_difference(t[i], r[i]);
        total += de;
        f.rf_ces[i] = cie224_rf_from_difference(de);
        // TM-30-20: the bin is chosen by the sample's hue angle under the reference.
        double h = std::atan2(r[i].b, r[i].a);
        if (h < 0) h += 2 * std::numbers::pi;
        const auto bin = static_cast<std::size_t>(std::min(kTm30HueBins - 1, static_cast<int>(h / bin_width)));
        ++f.ces_in_bin[bin];
        sum_de[bin] += de;
        ta[bin] += t[i].a;
        tb[bin] += t[i].b;
        ra[bin] += r[i].a;
        rb[bin] += r[i].b;
    }
    f.rf = cie224_rf_from_difference(total / kCesCount);

    // TM-30-20: bin averages, Rf,hj from the bin's mean difference, local chroma and hue shifts
    // along and across the bin's bisector theta_j = 22.5 (j - 1) + 11.25 degrees.
    const double nan = std::nan("");
    for (std::size_t j = 0; j < static_cast<std::size_t>(kTm30HueBins); ++j) {
        const int n = f.ces_in_bin[j];
        if (n == 0) {
            f.test_a[j] = f.test_b[j] = f.reference_a[j] = f.reference_b[j] = nan;
            f.rf_h[j] = f.rcs_h_percent[j] = f.rhs_h[j] = nan;
            continue;
        }
        f.test_a[j] = ta[j] / n;
        f.test_b[j] = tb[j] / n;
        f.reference_a[j] = ra[j] / n;
        f.reference_b[j] = rb[j] / n;
        f.rf_h[j] = cie224_rf_from_difference(sum_de[j] / n);
        const double theta = (static_cast<double>(j) + 0.5) * bin_width;
        const double da = f.test_a[j] - f.reference_a[j], db = f.test_b[j] - f.reference_b[j];
        const double radius = std::hypot(f.reference_a[j], f.reference_b[j]);
        f.rcs_h_percent[j] = 100 * (da * std::cos(theta) + db * std::sin(theta)) / radius;
        f.rhs_h[j] = (-da * std::sin(theta) + db * std::cos(theta)) / radius;
    }
    // TM-30-20: Rg = 100 x area of the test polygon / area of the reference polygon (shoelace,
    // over the bins that hold samples, in hue order).
    double area_t = 0, area_r = 0;
    std::vector<std::size_t> used;
    for (std::size_t j = 0; j < static_cast<std::size_t>(kTm30HueBins); ++j)
        if (f.ces_in_bin[j] > 0) used.push_back(j);
    for (std::size_t k = 0; k < used.size(); ++k) {
        const std::size_t p = used[k], q = used[(k + 1) % used.size()];
        area_t += f.test_a[p] * f.test_b[q] - f.test_a[q] * f.test_b[p];
        area_r += f.reference_a[p] * f.reference_b[q] - f.reference_a[q] * f.reference_b[p];
    }
    f.rg = 100 * area_t / area_r;
    return f;
}

std::vector<double> cie224_range_values(const Spectrum& s) {
    std::vector<double> v(kColourSize, 0.0);
    for (int nm = std::max(s.first_nm, kColourFirstNm); nm <= std::min(s.last_nm(), kColourLastNm); ++nm)
        v[static_cast<std::size_t>(nm - kColourFirstNm)] = s.values[static_cast<std::size_t>(nm - s.first_nm)];
    return v;
}

ColourFidelity colour_fidelity(const Spectrum& s, double cct_K, int interval_nm) {
    const auto v = cie224_range_values(s);
    return colour_fidelity_from_tristimuli(cie224_tristimuli(v.data(), interval_nm), cct_K, true, interval_nm);
}

int cie224_interval_for(const std::vector<double>& x) {
    constexpr double step = kCie224CoarseIntervalNm;
    if (x.size() < 2) return kCie224IntervalNm;
    // The nodes must be whole multiples of 5 nm (so 380 and 780 nm are among them where covered).
    const double r = std::fmod(x.front(), step);
    if (r != 0) return kCie224IntervalNm;
    for (std::size_t i = 0; i < x.size(); ++i)
        if (x[i] != x.front() + step * static_cast<double>(i)) return kCie224IntervalNm;
    return kCie224CoarseIntervalNm;
}

}  // namespace lampwright
