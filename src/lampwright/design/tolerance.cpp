#include "lampwright/design/tolerance.hpp"

#include "lampwright/core/statistics.hpp"

#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/colour/temperature.hpp"
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
constexpr int kWeightPoints = 61;         // coating weights of the M(W) table
constexpr double kMinD50Factor = 0.1;     // a lot's d50 is held above a tenth of the nominal

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

CesTristimuli ces_of(const Spectrum& s) { return cie224_tristimuli(cie224_range_values(s).data()); }

// Where shift t (in grid units) falls in a table of `size` rows: Catmull-Rom cubic through rows
// first .. first + 3, or, beyond the grid (more than 6 sigma), linear on the end interval (rows
// first, first + 1 with c[2] = c[3] = 0).
struct ShiftWeights {
    std::size_t first = 0;
    std::array<double, 4> c{};
};
ShiftWeights shift_weights(std::size_t size, double t) {
    const long last = static_cast<long>(size) - 1;
    long k = static_cast<long>(std::floor(t));
    ShiftWeights w;
    if (k >= 1 && k + 2 <= last) {
        const double f = t - static_cast<double>(k), f2 = f * f, f3 = f2 * f;
        w.first = static_cast<std::size_t>(k - 1);
        w.c = {-0.5 * f3 + f2 - 0.5 * f, 1.5 * f3 - 2.5 * f2 + 1, -1.5 * f3 + 2 * f2 + 0.5 * f, 0.5 * f3 - 0.5 * f2};
    } else {
        k = std::clamp(k, 0L, last - 1);
        const double f = t - static_cast<double>(k);
        w.first = static_cast<std::size_t>(k);
        w.c = {1 - f, f, 0, 0};
    }
    return w;
}

// sum_m w.c[m] * rows[w.first + m][j] for every j of a row.
template <class Row>
Row interpolate_rows(const std::vector<Row>& rows, const ShiftWeights& w) {
    Row u{};
    for (std::size_t m = 0; m < 4; ++m) {
        if (w.c[m] == 0) continue;
        const Row& r = rows[w.first + m];
        for (std::size_t j = 0; j < u.size(); ++j) u[j] += w.c[m] * r[j];
    }
    return u;
}


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

ToleranceModel::ToleranceModel(const ToleranceProblem& p, bool with_fidelity)
    : relative_(p.weighing_relative), seed_(p.seed), grid_step_(kGridStepNm) {
    const std::size_t n = p.blend.components.size();
    if (n == 0) throw Error(fmt::format("blend '{}' has no components", p.blend.name));
    sw_ = per_component(p.weighing_sigma, n, "weighing sigma");
    sp_ = per_component(p.peak_sigma_nm, n, "peak shift sigma");
    sq_ = per_component(p.qe_sigma, n, "QE sigma");
    sd_ = per_component(p.d50_sigma, n, "d50 sigma");
    sa_ = per_component(p.absorption_sigma, n, "absorption sigma");
    for (double s : {p.coating_weight_sigma_mg_per_cm2, p.measurement_sigma_xy})
        if (!(s >= 0) || !std::isfinite(s)) throw Error(fmt::format("a per-lamp sigma must be zero or positive, not {:g}", s));
    sc_ = p.coating_weight_sigma_mg_per_cm2;
    sm_ = p.measurement_sigma_xy;
    if (p.batch_size == 0) throw Error("a batch needs at least one lamp");
    batch_size_ = p.batch_size;
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
    grain_.assign(n, basis.grain_model);
    if (!basis.grain_model && std::any_of(sd_.begin(), sd_.end(), [](double s) { return s > 0; }))
        notes_.push_back("d50 not varied: without the grain model (LED pump, or grain data missing) the share does not depend on grain size");
    // 4f-4f (and Mn4+) lines do not move with the lot: a component whose emission model is
    // "lines" is never shifted (common practice, no source).
    std::vector<std::string> unshifted;
    for (std::size_t i = 0; i < n; ++i)
        if (p.blend.components[i].phosphor.emission_model == "lines" && sp_[i] > 0) {
            sp_[i] = 0;
            unshifted.push_back(p.blend.components[i].label);
        }
    if (!unshifted.empty()) {
        std::string list;
        for (const auto& u : unshifted) list += (list.empty() ? "" : ", ") + u;
        notes_.push_back(fmt::format("peak not shifted for the line emitters {} (emission model \"lines\")", list));
    }

    // One component alone, at a shift, at its data-file QE: its phosphor light (X, Y, Z, visible W).
    auto single = [&](std::size_t i, double shift, double qe) {
        BlendInput one = p.blend;
        BlendComponent c = p.blend.components[i];
        c.phosphor = shifted_phosphor(c.phosphor, shift);
        c.quantum_efficiency = qe;
        c.mass_fraction = 1.0;
        one.components = {c};
        return blend_basis(one);
    };
    {
        const BlendBasis zero = single(0, 0.0, 0.0);
        leak_ = xyz_array(lampwright::tristimulus(zero.light.front()));
        if (with_fidelity) ces_leak_ = ces_of(zero.light.front());
    }
    for (std::size_t i = 0; i < n; ++i) {
        const double qe0 = basis.quantum_efficiency[i];
        const auto half = static_cast<int>(std::ceil((kGridSigmas * sp_[i] + kGridExtraNm) / grid_step_));
        grid_lo_.push_back(-half * grid_step_);
        std::vector<std::array<double, 4>> t;
        std::vector<CesTristimuli> ct;
        for (int k = -half; k <= half; ++k) {
            try {
                const BlendBasis one = single(i, k * grid_step_, qe0);
                const auto u = xyz_array(lampwright::tristimulus(one.phosphor_light.front()));
                t.push_back({u[0], u[1], u[2], visible_power(one.phosphor_light.front())});
                if (with_fidelity) ct.push_back(ces_of(one.phosphor_light.front()));
            } catch (const Error& e) {
                throw Error(fmt::format("component '{}' shifted by {:+.2f} nm: {}", p.blend.components[i].label, k * grid_step_, e.what()));
            }
        }
        table_.push_back(std::move(t));
        if (with_fidelity) ces_table_.push_back(std::move(ct));
    }

    // M(W): the mercury lines that go with one W of visible phosphor light, from the full blend
    // model (they are the same for every component: light_i - phosphor_light_i, per its visible W).
    auto lines_per_watt = [&](const BlendInput& in) {
        const BlendBasis b = blend_basis(in);
        Spectrum extra = b.light.front();
        for (std::size_t k = 0; k < extra.values.size(); ++k) extra.values[k] -= b.phosphor_light.front().values[k];
        const double v = visible_power(b.phosphor_light.front());
        auto m = xyz_array(lampwright::tristimulus(extra));
        for (std::size_t j = 0; j < 3; ++j) m[j] = v > 0 ? (m[j] - leak_[j]) / v : 0.0;
        if (with_fidelity) {
            CesTristimuli mc = ces_of(extra);
            for (std::size_t j = 0; j < mc.size(); ++j) mc[j] = v > 0 ? (mc[j] - ces_leak_[j]) / v : 0.0;
            m_ces_table_.push_back(mc);
        }
        return m;
    };
    m_table_.push_back(lines_per_watt(p.blend));
    if (basis.coating.modelled) w0_ = basis.coating.weight_mg_per_cm2;
    if (sc_ > 0 && !basis.coating.modelled) {
        notes_.push_back("coating weight not varied: the coating model needs a mercury discharge and every component's density and d50");
    } else if (sc_ > 0) {
        const double lo = std::max(0.1 * w0_, w0_ - kGridSigmas * sc_), hi = w0_ + kGridSigmas * sc_;
        m_table_.clear();
        m_ces_table_.clear();
        for (int k = 0; k < kWeightPoints; ++k) {
            const double w = lo + (hi - lo) * k / (kWeightPoints - 1);
            BlendInput in = p.blend;
            in.coating_weight_mg_per_cm2 = w;
            weight_grid_.push_back(w);
            m_table_.push_back(lines_per_watt(in));
        }
    }
}

ToleranceDraw ToleranceModel::nominal_draw() const {
    ToleranceDraw d;
    d.mass_fractions = nominal_;
    d.shift_nm.assign(size(), 0.0);
    d.qe_factor.assign(size(), 1.0);
    d.d50_factor.assign(size(), 1.0);
    d.absorption_factor.assign(size(), 1.0);
    d.coating_weight_mg_per_cm2 = w0_;
    return d;
}

double ToleranceModel::share_factor(const ToleranceDraw& d, std::size_t i) const {
    const double a = d.absorption_factor.empty() ? 1.0 : d.absorption_factor[i];
    const double g = d.d50_factor.empty() || !grain_[i] ? 1.0 : d.d50_factor[i];
    return d.mass_fractions[i] * absorption_[i] * a / g;  // g ~ a / (rho d50) for the grain model, g = a otherwise
}

double ToleranceModel::share_total(const ToleranceDraw& d) const {
    double total = 0;
    for (std::size_t i = 0; i < nominal_.size(); ++i) total += share_factor(d, i);
    return total;
}

std::pair<std::size_t, double> ToleranceModel::weight_position(const ToleranceDraw& d) const {
    if (weight_grid_.size() < 2) return {0, 0.0};
    const double w = d.coating_weight_mg_per_cm2 > 0 ? d.coating_weight_mg_per_cm2 : w0_;
    const double step = (weight_grid_.back() - weight_grid_.front()) / static_cast<double>(weight_grid_.size() - 1);
    const double t = std::clamp((w - weight_grid_.front()) / step, 0.0, static_cast<double>(weight_grid_.size() - 1));
    const auto k = std::min(static_cast<std::size_t>(t), weight_grid_.size() - 2);
    return {k, t - static_cast<double>(k)};
}

XYZ ToleranceModel::tristimulus(const ToleranceDraw& d) const {
    const double total = share_total(d);
    // The mercury lines per W of visible phosphor light at this lamp's coating weight.
    std::array<double, 3> m = m_table_.front();
    if (weight_grid_.size() > 1) {
        const auto [k, f] = weight_position(d);
        for (std::size_t j = 0; j < 3; ++j) m[j] = (1 - f) * m_table_[k][j] + f * m_table_[k + 1][j];
    }
    std::array<double, 3> sum = leak_;
    for (std::size_t i = 0; i < nominal_.size(); ++i) {
        const double weight = share_factor(d, i) / total * d.qe_factor[i];
        if (weight == 0) continue;
        const auto u = interpolate_rows(table_[i], shift_weights(table_[i].size(), (d.shift_nm[i] - grid_lo_[i]) / grid_step_));
        for (std::size_t j = 0; j < 3; ++j) sum[j] += weight * (u[j] + u[3] * m[j]);
    }
    return {sum[0], sum[1], sum[2]};
}

CesTristimuli ToleranceModel::ces_tristimuli(const ToleranceDraw& d) const {
    if (!has_fidelity()) throw Error("the tolerance model was built without the CIE 224 tables");
    const double total = share_total(d);
    CesTristimuli m = m_ces_table_.front();
    if (weight_grid_.size() > 1) {
        const auto [k, f] = weight_position(d);
        for (std::size_t j = 0; j < m.size(); ++j) m[j] = (1 - f) * m_ces_table_[k][j] + f * m_ces_table_[k + 1][j];
    }
    CesTristimuli sum = ces_leak_;
    for (std::size_t i = 0; i < nominal_.size(); ++i) {
        const double weight = share_factor(d, i) / total * d.qe_factor[i];
        if (weight == 0) continue;
        const ShiftWeights sw = shift_weights(table_[i].size(), (d.shift_nm[i] - grid_lo_[i]) / grid_step_);
        const auto u = interpolate_rows(ces_table_[i], sw);
        const double visible = interpolate_rows(table_[i], sw)[3];
        for (std::size_t j = 0; j < sum.size(); ++j) sum[j] += weight * (u[j] + visible * m[j]);
    }
    return sum;
}

std::optional<ColourFidelity> ToleranceModel::fidelity(const ToleranceDraw& d) const {
    // The CCT (Ohno, CIE 1931 2-degree observer) from the fast tristimuli, as CIE 224:2017, 4.3 asks.
    const XYZ c = tristimulus(d);
    if (!(c.Y > 0)) return std::nullopt;
    const CctResult t = correlated_colour_temperature(uv_1960(c));
    if (!t.valid) return std::nullopt;
    try {
        return colour_fidelity_from_tristimuli(ces_tristimuli(d), t.cct_K);
    } catch (const Error&) {
        return std::nullopt;
    }
}

Chromaticity ToleranceModel::chromaticity(const ToleranceDraw& d) const { return measured(lampwright::chromaticity(tristimulus(d)), d); }

Chromaticity measured(const Chromaticity& xy, const ToleranceDraw& d) { return {xy.x + d.measurement_dx, xy.y + d.measurement_dy}; }

ToleranceSampler::ToleranceSampler(const ToleranceModel& model, std::uint64_t seed) : model_(&model), rng_(seed), normal_(0.0, 1.0) {}

void ToleranceSampler::next(ToleranceDraw& d) {
    const ToleranceModel& m = *model_;
    const std::size_t n = m.nominal_.size();
    if (lamp_ % m.batch_size_ == 0) {
        // A new batch: one powder mix, weighed once, from one lot of each phosphor.
        ToleranceDraw& b = batch_;
        b.mass_fractions.resize(n);
        b.shift_nm.resize(n);
        b.qe_factor.resize(n);
        b.d50_factor.resize(n);
        b.absorption_factor.resize(n);
        b.batch = lamp_ / m.batch_size_;
        double total = 0;
        for (std::size_t i = 0; i < n; ++i) {
            const double zw = normal_(rng_), zp = normal_(rng_), zq = normal_(rng_), zd = normal_(rng_), za = normal_(rng_);
            const double w = m.nominal_[i];
            b.mass_fractions[i] = std::max(0.0, m.relative_ ? w * (1 + m.sw_[i] * zw) : w + m.sw_[i] * zw);
            b.shift_nm[i] = m.sp_[i] * zp;
            b.qe_factor[i] = std::max(0.0, 1 + m.sq_[i] * zq);
            b.d50_factor[i] = std::max(kMinD50Factor, 1 + m.sd_[i] * zd);
            b.absorption_factor[i] = std::max(0.0, 1 + m.sa_[i] * za);
            total += b.mass_fractions[i] * m.absorption_[i] * b.absorption_factor[i];
        }
        if (!(total > 0)) {  // every absorbing component weighed (or absorbing) at zero: not a lamp; keep the aim
            b.mass_fractions = m.nominal_;
            b.absorption_factor.assign(n, 1.0);
        }
        const double sum = std::accumulate(b.mass_fractions.begin(), b.mass_fractions.end(), 0.0);
        for (double& w : b.mass_fractions) w /= sum;
    }
    d.mass_fractions = batch_.mass_fractions;
    d.shift_nm = batch_.shift_nm;
    d.qe_factor = batch_.qe_factor;
    d.d50_factor = batch_.d50_factor;
    d.absorption_factor = batch_.absorption_factor;
    d.batch = batch_.batch;
    // This lamp's own coating weight and measurement.
    const double zc = normal_(rng_), zx = normal_(rng_), zy = normal_(rng_);
    d.coating_weight_mg_per_cm2 = m.w0_ > 0 ? std::max(0.1 * m.w0_, m.w0_ + m.sc_ * zc) : 0.0;
    d.measurement_dx = m.sm_ * zx;
    d.measurement_dy = m.sm_ * zy;
    ++lamp_;
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
        if (!d.absorption_factor.empty()) c.absorption = basis.absorption[i] * d.absorption_factor[i];
        if (!d.d50_factor.empty() && basis.grain_model) c.d50_um = c.d50_um.value_or(c.phosphor.d50_um) * d.d50_factor[i];
        b.components.push_back(std::move(c));
    }
    if (d.coating_weight_mg_per_cm2 > 0 && basis.coating.modelled) b.coating_weight_mg_per_cm2 = d.coating_weight_mg_per_cm2;
    return evaluate_blend(b);
}

namespace {

// Rf and Rg of the first draws again (a new sampler with the same seed gives the same draws), so
// the chromaticity loop stays as fast as it was.
void add_fidelity_spread(const ToleranceProblem& p, const ToleranceModel& model, ToleranceResult& r) {
    const double nan = std::numeric_limits<double>::quiet_NaN();
    const auto f0 = model.fidelity(model.nominal_draw());
    r.nominal_rf = f0 ? f0->rf : nan;
    r.nominal_rg = f0 ? f0->rg : nan;
    ToleranceSampler again(model, p.seed);
    ToleranceDraw d;
    std::vector<double> rf, rg;
    const std::size_t nf = std::min(p.draws, p.fidelity_draws);
    for (std::size_t k = 0; k < nf; ++k) {
        again.next(d);
        if (const auto f = model.fidelity(d)) {
            rf.push_back(f->rf);
            rg.push_back(f->rg);
        }
    }
    r.fidelity_draws = rf.size();
    const auto spread = [nan](std::vector<double>& v) {
        if (v.empty()) return ToleranceResult::Spread{nan, nan, nan, nan};
        ToleranceResult::Spread s;
        s.mean = mean(v);
        s.sd = v.size() > 1 ? sample_sd(v) : 0.0;
        std::sort(v.begin(), v.end());
        s.p05 = quantile_sorted(v, 0.05);
        s.p95 = quantile_sorted(v, 0.95);
        return s;
    };
    r.rf = spread(rf);
    r.rg = spread(rg);
}

}  // namespace

ToleranceResult run_tolerance(const ToleranceProblem& p, const ToleranceProgress& progress, bool keep_steps) {
    if (p.draws == 0) throw Error("a tolerance run needs at least one draw");
    if (!(p.steps > 0)) throw Error(fmt::format("the yield ellipse needs a positive number of steps, not {:g}", p.steps));
    const ToleranceModel model(p, p.fidelity_draws > 0);
    ToleranceSampler sampler(model, p.seed);
    ToleranceResult r;
    r.draws = p.draws;
    r.seed = p.seed;
    r.steps_limit = p.steps;
    r.target = p.ellipse.centre;
    r.notes = model.notes();
    r.batch_size = p.batch_size;
    r.nominal_xy = model.chromaticity(model.nominal_draw());
    r.nominal_steps = macadam_steps(p.ellipse, r.nominal_xy);
    std::vector<double> steps(p.draws);
    std::vector<Chromaticity> xys;  // every draw's, only when kept
    if (keep_steps) xys.resize(p.draws);
    ToleranceDraw d;
    // Welford's running moments (common practice), over the draws with a finite chromaticity only:
    // a draw that gives no light (every QE factor drawn at 0) is a failed lamp, counted in
    // r.failed and outside the ellipse, and never averaged or sorted as a number.
    double mean_s = 0, m2_s = 0, mx = 0, my = 0, cxx = 0, cyy = 0, cxy = 0;
    std::size_t good = 0;
    // Per batch: its finite lamps' chromaticities and how many are inside.
    struct Batch {
        Chromaticity centre;
        std::size_t good = 0, inside = 0, lamps = 0;
    };
    std::vector<Batch> batches;
    // The lamps of the batch being drawn (finite ones), and the within-batch sums of squares of x,
    // y and of the MacAdam distance from the batch mean (one-way analysis of variance, common
    // practice, no source).
    std::vector<Chromaticity> current;
    double wxx = 0, wyy = 0, ws2 = 0;
    auto close_batch = [&](Batch& bt) {
        if (current.empty()) return;
        double sx = 0, sy = 0;
        for (const auto& c : current) sx += c.x, sy += c.y;
        bt.centre = {sx / static_cast<double>(current.size()), sy / static_cast<double>(current.size())};
        MacAdamEllipse e = p.ellipse;
        e.centre = bt.centre;
        for (const auto& c : current) {
            const double dx = c.x - bt.centre.x, dy = c.y - bt.centre.y, st = macadam_steps(e, c);
            wxx += dx * dx;
            wyy += dy * dy;
            ws2 += st * st;
        }
        current.clear();
    };
    const std::size_t every = std::max<std::size_t>(1, p.draws / 100);
    for (std::size_t k = 0; k < p.draws; ++k) {
        sampler.next(d);
        if (d.batch >= batches.size()) {
            if (!batches.empty()) close_batch(batches.back());
            batches.resize(d.batch + 1);
        }
        Batch& bt = batches[d.batch];
        ++bt.lamps;
        const Chromaticity xy = model.chromaticity(d);
        if (keep_steps) xys[k] = xy;
        const double s = macadam_steps(p.ellipse, xy);
        steps[k] = s;
        if (!std::isfinite(s) || !std::isfinite(xy.x) || !std::isfinite(xy.y)) {
            steps[k] = std::numeric_limits<double>::quiet_NaN();
            ++r.failed;
        } else {
            if (s <= p.steps) ++r.inside, ++bt.inside;
            ++good;
            ++bt.good;
            current.push_back(xy);
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
    close_batch(batches.back());
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
    r.batches = batches.size();
    if (p.batch_size == 1 || batches.size() < 2) {
        r.yield_standard_error = std::sqrt(r.yield * (1 - r.yield) / N);  // binomial
    } else {
        // Lamps of a batch are not independent: the standard error of a ratio over clusters,
        // SE^2 = B / (B - 1) sum_b (inside_b - p n_b)^2 / N^2 (cluster sampling, Cochran 1977,
        // Sampling Techniques, ch. 6 ratio estimator; from memory).
        double ss = 0;
        for (const auto& bt : batches) {
            const double e = static_cast<double>(bt.inside) - r.yield * static_cast<double>(bt.lamps);
            ss += e * e;
        }
        const double B = static_cast<double>(batches.size());
        r.yield_standard_error = std::sqrt(B / (B - 1) * ss) / N;
    }
    // Between batches (one-way analysis of variance, common practice, no source).
    {
        double bx = 0, by = 0;
        std::size_t used = 0;
        for (const auto& bt : batches) {
            if (bt.good == 0) continue;
            bx += bt.centre.x;
            by += bt.centre.y;
            ++used;
        }
        const Chromaticity grand{bx / static_cast<double>(used), by / static_cast<double>(used)};
        double bxx = 0, byy = 0, bs2 = 0;
        MacAdamEllipse eg = p.ellipse;
        eg.centre = grand;
        for (const auto& bt : batches) {
            if (bt.good == 0) continue;
            const double dx = bt.centre.x - grand.x, dy = bt.centre.y - grand.y, s = macadam_steps(eg, bt.centre);
            bxx += dx * dx;
            byy += dy * dy;
            bs2 += s * s;
            r.worst_batch_mean_steps = std::max(r.worst_batch_mean_steps, macadam_steps(p.ellipse, bt.centre));
        }
        const double dof_w = G - static_cast<double>(used);
        if (dof_w > 0) {
            r.sd_x_within = std::sqrt(wxx / dof_w);
            r.sd_y_within = std::sqrt(wyy / dof_w);
        }
        r.within_steps_rms = std::sqrt(ws2 / G);
        if (used > 1) {
            r.sd_x_between = std::sqrt(bxx / static_cast<double>(used - 1));
            r.sd_y_between = std::sqrt(byy / static_cast<double>(used - 1));
        }
        r.between_steps_rms = std::sqrt(bs2 / static_cast<double>(used));
    }
    if (keep_steps) {
        r.steps = steps;
        r.xy = xys;
    }
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
    if (p.fidelity_draws > 0) add_fidelity_spread(p, model, r);
    return r;
}

}  // namespace lampwright
