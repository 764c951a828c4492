#include "lampwright/colour/temperature.hpp"

#include "lampwright/colour/illuminants.hpp"
#include "lampwright/colour/precomputed_tables.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <span>
#include <vector>

namespace lampwright {

namespace {

UV uv_of_values(const std::vector<double>& values) {
    return uv_1960(tristimulus_colour_range(values.data(), Observer::cie1931_2deg));
}

// Planck locus at a reciprocal temperature in mired; 0 mired is the Rayleigh-Jeans limit l^-4.
UV planck_uv_mired(double mired) {
    std::vector<double> v(kColourSize);
    for (int i = 0; i < kColourSize; ++i) {
        const double nm = kColourFirstNm + i;
        v[i] = mired <= 0.0 ? std::pow(nm / 560.0, -4) : planck_relative(nm, 1e6 / mired);
    }
    return uv_of_values(v);
}

// The Ohno table: T, u, v as three runs of equal length in one flat array (generated at build
// time, see precomputed_tables.hpp).
struct PlanckTable {
    std::span<const double> t, u, v;
};

constexpr double kTableRatio = 1.001;
constexpr double kTableFirstK = kCctMinK / (kTableRatio * kTableRatio);

const PlanckTable& ohno_table() {
    static std::vector<double> store;
    static const PlanckTable table = [] {
        const auto flat = precomputed::computed_unless_generated(precomputed::ohno_planck_table(), store, compute_ohno_planck_table);
        const std::size_t n = flat.size() / 3;
        return PlanckTable{flat.subspan(0, n), flat.subspan(n, n), flat.subspan(2 * n, n)};
    }();
    return table;
}

double distance2(const PlanckTable& tab, std::size_t i, const UV& p) {
    const double du = p.u - tab.u[i], dv = p.v - tab.v[i];
    return du * du + dv * dv;
}
double distance(const PlanckTable& tab, std::size_t i, const UV& p) { return std::sqrt(distance2(tab, i, p)); }

CctResult finish(double t, double duv) {
    CctResult r;
    r.duv = duv;
    if (std::abs(duv) > kCctMaxDuv) {
        r.problem = fmt::format("the chromaticity is {:.4f} from the Planckian locus (more than {:.2f} in uv): no CCT", duv, kCctMaxDuv);
        return r;
    }
    // Tolerance 1e-5: the methods' own error (about 1e-6 relative for the 0.1 % Ohno table) must not
    // push a chromaticity at exactly 1000 K or 100000 K out of the range.
    if (t < kCctMinK * (1 - 1e-5) || t > kCctMaxK * (1 + 1e-5)) {
        r.problem = fmt::format("the CCT would be {:.0f} K, outside {:.0f}-{:.0f} K", t, kCctMinK, kCctMaxK);
        return r;
    }
    r.valid = true;
    r.cct_K = t;
    return r;
}

CctResult ohno(const UV& p) {
    const auto& tab = ohno_table();
    const std::size_t n = tab.t.size();
    // Within |Duv| <= 0.05 the distance to the table points is unimodal along the locus (its radius
    // of curvature is far larger), so the nearest point is where the distance stops falling.
    std::size_t lo = 0, hi = n - 1;
    while (lo < hi) {
        const std::size_t mid = (lo + hi) / 2;
        if (distance2(tab, mid + 1, p) < distance2(tab, mid, p)) lo = mid + 1;
        else hi = mid;
    }
    const std::size_t best = lo;
    const double best_d = distance2(tab, best, p);
    const std::size_t m = std::clamp<std::size_t>(best, 1, n - 2);
    if (best == 0 || best == n - 1) {
        const double sign = p.v >= tab.v[best] ? 1.0 : -1.0;
        return finish(best == 0 ? 0.5 * kCctMinK : 2 * kCctMaxK, sign * std::sqrt(best_d));
    }

    const double t0 = tab.t[m - 1], t1 = tab.t[m], t2 = tab.t[m + 1];
    const double d0 = distance(tab, m - 1, p), d1 = distance(tab, m, p), d2 = distance(tab, m + 1, p);

    // Triangular solution (Ohno 2014, eqs. 3-6).
    const double l = std::hypot(tab.u[m + 1] - tab.u[m - 1], tab.v[m + 1] - tab.v[m - 1]);
    const double x = (d0 * d0 - d2 * d2 + l * l) / (2 * l);
    const double t_tri = t0 + (t2 - t0) * x / l;
    const double v_x = tab.v[m - 1] + (tab.v[m + 1] - tab.v[m - 1]) * x / l;
    const double sign = p.v - v_x >= 0 ? 1.0 : -1.0;
    const double duv_tri = sign * std::sqrt(std::max(0.0, d0 * d0 - x * x));
    if (std::abs(duv_tri) < 0.002) return finish(t_tri, duv_tri);

    // Parabolic solution (Ohno 2014, eqs. 7-11).
    const double X = (t2 - t1) * (t0 - t2) * (t1 - t0);
    const double a = (t0 * (d2 - d1) + t1 * (d0 - d2) + t2 * (d1 - d0)) / X;
    const double b = -(t0 * t0 * (d2 - d1) + t1 * t1 * (d0 - d2) + t2 * t2 * (d1 - d0)) / X;
    const double c = -(d0 * (t2 - t1) * t1 * t2 + d1 * (t0 - t2) * t0 * t2 + d2 * (t1 - t0) * t0 * t1) / X;
    const double t_par = -b / (2 * a);
    return finish(t_par, sign * (a * t_par * t_par + b * t_par + c));
}

struct IsotemperatureLine {
    double mired, u, v;
    double tu, tv;  // unit tangent of the locus towards higher mired (the line's normal)
};

const std::vector<IsotemperatureLine>& robertson_lines() {
    static const std::vector<IsotemperatureLine> lines = [] {
        std::vector<double> store;
        const auto flat = precomputed::computed_unless_generated(precomputed::robertson_lines(), store, compute_robertson_lines);
        std::vector<IsotemperatureLine> out;
        for (std::size_t i = 0; i + 5 <= flat.size(); i += 5) out.push_back({flat[i], flat[i + 1], flat[i + 2], flat[i + 3], flat[i + 4]});
        return out;
    }();
    return lines;
}

CctResult robertson(const UV& p) {
    const auto& lines = robertson_lines();
    double d_prev = 0;
    for (std::size_t i = 0; i < lines.size(); ++i) {
        const auto& L = lines[i];
        // Signed distance from the isotemperature line (Robertson's d_i, with one orientation throughout).
        const double d = (p.u - L.u) * L.tu + (p.v - L.v) * L.tv;
        if (i > 0 && (d == 0 || d / d_prev < 0)) {
            const auto& P = lines[i - 1];
            const double mired = P.mired + (L.mired - P.mired) * d_prev / (d_prev - d);
            if (mired <= 0) return finish(2 * kCctMaxK, 0);
            const double t = 1e6 / mired;
            const UV on = planck_uv_tabulated(t);
            const double duv = std::hypot(p.u - on.u, p.v - on.v) * (p.v >= on.v ? 1.0 : -1.0);
            return finish(t, duv);
        }
        d_prev = d;
    }
    CctResult r;
    r.problem = fmt::format("the chromaticity (u {:.4f}, v {:.4f}) lies beyond the isotemperature lines of {:.0f}-{:.0f} K", p.u, p.v, kCctMinK, kCctMaxK);
    return r;
}

}  // namespace

UV planck_uv(double temperature_K) { return planck_uv_mired(1e6 / temperature_K); }

UV planck_uv_tabulated(double temperature_K) {
    const auto& tab = ohno_table();
    const int n = static_cast<int>(tab.t.size());
    // The table is geometric in T: point k lies at kTableFirstK x 1.001^k.
    const double pos = std::log(temperature_K / kTableFirstK) / std::log(kTableRatio);
    if (!(pos >= 1 && pos <= n - 2)) return planck_uv(temperature_K);
    const int i = std::clamp(static_cast<int>(std::floor(pos)), 1, n - 3);
    // 4-point Lagrange in T over points i-1..i+2 (error about 1e-13 in uv at a 0.1 % step).
    const double x0 = tab.t[i - 1], x1 = tab.t[i], x2 = tab.t[i + 1], x3 = tab.t[i + 2], x = temperature_K;
    const double w0 = (x - x1) * (x - x2) * (x - x3) / ((x0 - x1) * (x0 - x2) * (x0 - x3));
    const double w1 = (x - x0) * (x - x2) * (x - x3) / ((x1 - x0) * (x1 - x2) * (x1 - x3));
    const double w2 = (x - x0) * (x - x1) * (x - x3) / ((x2 - x0) * (x2 - x1) * (x2 - x3));
    const double w3 = (x - x0) * (x - x1) * (x - x2) / ((x3 - x0) * (x3 - x1) * (x3 - x2));
    const auto at = [&](std::span<const double> c) { return w0 * c[i - 1] + w1 * c[i] + w2 * c[i + 1] + w3 * c[i + 2]; };
    return {at(tab.u), at(tab.v)};
}

std::vector<double> compute_ohno_planck_table() {
    std::vector<double> t, u, v;
    for (double k = kTableFirstK; k <= kCctMaxK * kTableRatio * kTableRatio; k *= kTableRatio) {
        const UV p = planck_uv(k);
        t.push_back(k);
        u.push_back(p.u);
        v.push_back(p.v);
    }
    t.insert(t.end(), u.begin(), u.end());
    t.insert(t.end(), v.begin(), v.end());
    return t;
}

std::vector<double> compute_robertson_lines() {
    std::vector<double> mireds;
    for (int m = 0; m <= 100; m += 10) mireds.push_back(m);
    for (int m = 125; m <= 1000; m += 25) mireds.push_back(m);
    std::vector<double> out;
    for (double m : mireds) {
        const UV p = planck_uv_mired(m);
        const double h = 0.01;
        const UV a = planck_uv_mired(m > 0 ? m - h : m), b = planck_uv_mired(m + h);
        // Isotemperature lines are normal to the locus in CIE 1960 uv. Robertson's slope -du/dv
        // becomes infinite where v peaks (about 617 mired) and its sign convention flips there,
        // so the line is kept as the locus tangent, oriented towards higher mired.
        const double len = std::hypot(b.u - a.u, b.v - a.v);
        out.insert(out.end(), {m, p.u, p.v, (b.u - a.u) / len, (b.v - a.v) / len});
    }
    return out;
}

CctResult correlated_colour_temperature(const UV& uv1960, CctMethod method) {
    if (!std::isfinite(uv1960.u) || !std::isfinite(uv1960.v)) {
        CctResult r;
        r.problem = "the chromaticity is not finite";
        return r;
    }
    return method == CctMethod::ohno2014 ? ohno(uv1960) : robertson(uv1960);
}

}  // namespace lampwright
