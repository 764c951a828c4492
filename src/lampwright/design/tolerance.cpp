#include "lampwright/design/tolerance.hpp"

#include "lampwright/core/statistics.hpp"

#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/core/error.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>

namespace lampwright {

namespace {

constexpr double kGridStepNm = 0.25;
constexpr double kGridSigmas = 6.0;
constexpr double kGridExtraNm = 0.5;

std::vector<double> per_component(const std::vector<double>& v, std::size_t n, const char* what) {
    std::vector<double> out;
    if (v.empty()) out.assign(n, 0.0);
    else if (v.size() == 1) out.assign(n, v.front());
    else if (v.size() == n) out = v;
    else throw Error(fmt::format("{}: give one value for all components or one per component ({}), not {}", what, n, v.size()));
    for (double s : out)
        if (!(s >= 0) || !std::isfinite(s)) throw Error(fmt::format("{} must be zero or positive, not {:g}", what, s));
    return out;
}

std::array<double, 3> xyz_array(const XYZ& c) { return {c.X, c.Y, c.Z}; }


}  // namespace

MacAdamEllipse tolerance_ellipse(const Target& target) { return target.ellipse ? *target.ellipse : nearest_step_ellipse(target.xy); }

std::string tolerance_ellipse_source(const Target& target) {
    if (target.ellipse) return fmt::format("the target's own one-step ellipse ({})", target.description);
    return "the one-step ellipse of the nearest ANSI C78.376 lamp colour (from memory), moved to the target";
}

Phosphor shifted_phosphor(const Phosphor& p, double shift_nm) {
    Phosphor q = p;
    if (shift_nm == 0) return q;
    for (auto& b : q.bands) b.peak_nm += shift_nm;
    for (auto& l : q.lines) l.nm += shift_nm;
    if (!q.measured_power.values.empty()) {
        const auto& v = p.measured_power.values;
        for (std::size_t j = 0; j < v.size(); ++j) {
            const double x = static_cast<double>(j) - shift_nm;  // where this point's light came from
            const double f = std::floor(x);
            const auto k = static_cast<long>(f);
            const double t = x - f;
            auto at = [&](long i) { return i >= 0 && i < static_cast<long>(v.size()) ? v[static_cast<std::size_t>(i)] : 0.0; };
            q.measured_power.values[j] = (1 - t) * at(k) + t * at(k + 1);
        }
    }
    return q;
}

ToleranceModel::ToleranceModel(const ToleranceProblem& p) : relative_(p.weighing_relative), seed_(p.seed), grid_step_(kGridStepNm) {
    const std::size_t n = p.blend.components.size();
    if (n == 0) throw Error(fmt::format("blend '{}' has no components", p.blend.name));
    sw_ = per_component(p.weighing_sigma, n, "weighing sigma");
    sp_ = per_component(p.peak_sigma_nm, n, "peak shift sigma");
    sq_ = per_component(p.qe_sigma, n, "QE sigma");
    double total = 0;
    for (const auto& c : p.blend.components) {
        if (!(c.mass_fraction > 0) || !std::isfinite(c.mass_fraction))
            throw Error(fmt::format("component '{}': mass fraction must be greater than zero, not {:g}", c.label, c.mass_fraction));
        total += c.mass_fraction;
    }
    for (const auto& c : p.blend.components) nominal_.push_back(c.mass_fraction / total);
    const BlendBasis basis = blend_basis(p.blend);
    absorption_ = basis.share_weight;
    if (!(std::inner_product(nominal_.begin(), nominal_.end(), absorption_.begin(), 0.0) > 0))
        throw Error(fmt::format("no component of blend '{}' absorbs the {}", p.blend.name, p.blend.excitation.describe()));

    // One component alone, at a shift, at its data-file QE (or 0 for the leak alone).
    auto single = [&](std::size_t i, double shift, double qe) {
        BlendInput one = p.blend;
        BlendComponent c = p.blend.components[i];
        c.phosphor = shifted_phosphor(c.phosphor, shift);
        c.quantum_efficiency = qe;
        c.mass_fraction = 1.0;
        one.components = {c};
        return xyz_array(lampwright::tristimulus(blend_basis(one).light.front()));
    };
    leak_ = single(0, 0.0, 0.0);
    for (std::size_t i = 0; i < n; ++i) {
        const double qe0 = basis.quantum_efficiency[i];
        const auto half = static_cast<int>(std::ceil((kGridSigmas * sp_[i] + kGridExtraNm) / grid_step_));
        grid_lo_.push_back(-half * grid_step_);
        std::vector<std::array<double, 3>> t;
        for (int k = -half; k <= half; ++k) {
            try {
                auto u = single(i, k * grid_step_, qe0);
                for (int j = 0; j < 3; ++j) u[static_cast<std::size_t>(j)] -= leak_[static_cast<std::size_t>(j)];
                t.push_back(u);
            } catch (const Error& e) {
                throw Error(fmt::format("component '{}' shifted by {:+.2f} nm: {}", p.blend.components[i].label, k * grid_step_, e.what()));
            }
        }
        table_.push_back(std::move(t));
    }
}

XYZ ToleranceModel::tristimulus(const ToleranceDraw& d) const {
    const std::size_t n = nominal_.size();
    double total = 0;
    for (std::size_t i = 0; i < n; ++i) total += d.mass_fractions[i] * absorption_[i];
    std::array<double, 3> sum = leak_;
    for (std::size_t i = 0; i < n; ++i) {
        const double weight = d.mass_fractions[i] * absorption_[i] / total * d.qe_factor[i];
        if (weight == 0) continue;
        const auto& tab = table_[i];
        const double t = (d.shift_nm[i] - grid_lo_[i]) / grid_step_;
        const long last = static_cast<long>(tab.size()) - 1;
        long k = static_cast<long>(std::floor(t));
        if (k >= 1 && k + 2 <= last) {
            // Catmull-Rom cubic through tab[k-1 .. k+2].
            const double f = t - static_cast<double>(k), f2 = f * f, f3 = f2 * f;
            const double c0 = -0.5 * f3 + f2 - 0.5 * f, c1 = 1.5 * f3 - 2.5 * f2 + 1, c2 = -1.5 * f3 + 2 * f2 + 0.5 * f,
                         c3 = 0.5 * f3 - 0.5 * f2;
            const auto ku = static_cast<std::size_t>(k);
            for (std::size_t j = 0; j < 3; ++j)
                sum[j] += weight * (c0 * tab[ku - 1][j] + c1 * tab[ku][j] + c2 * tab[ku + 1][j] + c3 * tab[ku + 2][j]);
        } else {
            // Beyond the grid (more than 6 sigma): linear on the end interval.
            k = std::clamp(k, 0L, last - 1);
            const double f = t - static_cast<double>(k);
            const auto ku = static_cast<std::size_t>(k);
            for (std::size_t j = 0; j < 3; ++j) sum[j] += weight * ((1 - f) * tab[ku][j] + f * tab[ku + 1][j]);
        }
    }
    return {sum[0], sum[1], sum[2]};
}

Chromaticity ToleranceModel::chromaticity(const ToleranceDraw& d) const { return lampwright::chromaticity(tristimulus(d)); }

ToleranceSampler::ToleranceSampler(const ToleranceModel& model, std::uint64_t seed) : model_(&model), rng_(seed), normal_(0.0, 1.0) {}

void ToleranceSampler::next(ToleranceDraw& d) {
    const ToleranceModel& m = *model_;
    const std::size_t n = m.nominal_.size();
    d.mass_fractions.resize(n);
    d.shift_nm.resize(n);
    d.qe_factor.resize(n);
    double total = 0;
    for (std::size_t i = 0; i < n; ++i) {
        const double zw = normal_(rng_), zp = normal_(rng_), zq = normal_(rng_);
        const double w = m.nominal_[i];
        d.mass_fractions[i] = std::max(0.0, m.relative_ ? w * (1 + m.sw_[i] * zw) : w + m.sw_[i] * zw);
        total += d.mass_fractions[i] * m.absorption_[i];
        d.shift_nm[i] = m.sp_[i] * zp;
        d.qe_factor[i] = std::max(0.0, 1 + m.sq_[i] * zq);
    }
    if (!(total > 0)) d.mass_fractions = m.nominal_;  // every absorbing component weighed at zero: not a lamp; keep the aim
    const double sum = std::accumulate(d.mass_fractions.begin(), d.mass_fractions.end(), 0.0);
    for (double& w : d.mass_fractions) w /= sum;
}

BlendResult evaluate_draw_exactly(const BlendInput& blend, const ToleranceDraw& d) {
    const BlendBasis basis = blend_basis(blend);
    BlendInput b = blend;
    b.components.clear();
    for (std::size_t i = 0; i < blend.components.size(); ++i) {
        if (!(d.mass_fractions[i] > 0)) continue;
        BlendComponent c = blend.components[i];
        c.mass_fraction = d.mass_fractions[i];
        c.phosphor = shifted_phosphor(c.phosphor, d.shift_nm[i]);
        c.quantum_efficiency = basis.quantum_efficiency[i] * d.qe_factor[i];
        b.components.push_back(std::move(c));
    }
    return evaluate_blend(b);
}

ToleranceResult run_tolerance(const ToleranceProblem& p, const ToleranceProgress& progress, bool keep_steps) {
    if (p.draws == 0) throw Error("a tolerance run needs at least one draw");
    if (!(p.steps > 0)) throw Error(fmt::format("the yield ellipse needs a positive number of steps, not {:g}", p.steps));
    const ToleranceModel model(p);
    ToleranceSampler sampler(model, p.seed);
    ToleranceResult r;
    r.draws = p.draws;
    r.seed = p.seed;
    r.steps_limit = p.steps;
    r.target = p.ellipse.centre;
    {
        ToleranceDraw nominal{model.nominal_fractions(), std::vector<double>(model.size(), 0.0), std::vector<double>(model.size(), 1.0)};
        r.nominal_xy = model.chromaticity(nominal);
        r.nominal_steps = macadam_steps(p.ellipse, r.nominal_xy);
    }
    std::vector<double> steps(p.draws);
    ToleranceDraw d;
    // Welford's running moments (common practice), over the draws with a finite chromaticity only:
    // a draw that gives no light (every QE factor drawn at 0) is a failed lamp, counted in
    // r.failed and outside the ellipse, and never averaged or sorted as a number.
    double mean_s = 0, m2_s = 0, mx = 0, my = 0, cxx = 0, cyy = 0, cxy = 0;
    std::size_t good = 0;
    const std::size_t every = std::max<std::size_t>(1, p.draws / 100);
    for (std::size_t k = 0; k < p.draws; ++k) {
        sampler.next(d);
        const Chromaticity xy = model.chromaticity(d);
        const double s = macadam_steps(p.ellipse, xy);
        steps[k] = s;
        if (!std::isfinite(s) || !std::isfinite(xy.x) || !std::isfinite(xy.y)) {
            steps[k] = std::numeric_limits<double>::quiet_NaN();
            ++r.failed;
        } else {
            if (s <= p.steps) ++r.inside;
            ++good;
            const double nk = static_cast<double>(good);
            const double ds = s - mean_s;
            mean_s += ds / nk;
            m2_s += ds * (s - mean_s);
            const double dx = xy.x - mx, dy = xy.y - my;
            mx += dx / nk;
            my += dy / nk;
            cxx += dx * (xy.x - mx);
            cyy += dy * (xy.y - my);
            cxy += dx * (xy.y - my);
        }
        if (progress && ((k + 1) % every == 0 || k + 1 == p.draws)) progress(k + 1, p.draws);
    }
    if (good == 0)
        throw Error(fmt::format("no draw of {} gave a finite chromaticity (every lamp without light): the sigmas are too large", p.draws));
    const double N = static_cast<double>(p.draws), G = static_cast<double>(good);
    r.mean_steps = mean_s;
    r.sd_steps = good > 1 ? std::sqrt(m2_s / (G - 1)) : 0.0;
    r.mean_x = mx;
    r.mean_y = my;
    r.sd_x = good > 1 ? std::sqrt(cxx / (G - 1)) : 0.0;
    r.sd_y = good > 1 ? std::sqrt(cyy / (G - 1)) : 0.0;
    r.corr_xy = cxx > 0 && cyy > 0 ? cxy / std::sqrt(cxx * cyy) : 0.0;
    // The yield is over every lamp made: a failed lamp is not inside.
    r.yield = static_cast<double>(r.inside) / N;
    r.yield_standard_error = std::sqrt(r.yield * (1 - r.yield) / N);
    if (keep_steps) r.steps = steps;
    std::vector<double> sorted;
    sorted.reserve(good);
    for (double s : steps)
        if (std::isfinite(s)) sorted.push_back(s);
    std::sort(sorted.begin(), sorted.end());
    r.p50 = quantile_sorted(sorted, 0.50);
    r.p90 = quantile_sorted(sorted, 0.90);
    r.p95 = quantile_sorted(sorted, 0.95);
    r.p99 = quantile_sorted(sorted, 0.99);
    r.max_steps = sorted.back();
    return r;
}

}  // namespace lampwright
