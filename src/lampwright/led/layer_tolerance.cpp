#include "lampwright/led/layer_tolerance.hpp"

#include "lampwright/core/error.hpp"
#include "lampwright/core/statistics.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <random>

namespace lampwright {

namespace {

constexpr double kMinFactor = 0.1;  // a drawn loading, thickness or d50 is held above a tenth of the nominal

AssessOptions quick_options() {
    AssessOptions o;
    o.spectral_features = false;
    o.colour_fidelity = false;
    return o;
}

}  // namespace

double layer_tolerance_default(const std::string& key) {
    for (const auto& d : kLayerToleranceDefaults)
        if (key == d.key) return d.sigma;
    throw Error(fmt::format("no layer tolerance source '{}'", key));
}

LayerToleranceResult run_layer_tolerance(const LayerToleranceProblem& p) {
    if (p.draws == 0) throw Error("a tolerance run needs at least one draw");
    if (p.design.components.empty()) throw Error("the design has no components");
    if (!(p.steps > 0)) throw Error(fmt::format("the yield ellipse needs a positive number of steps, not {:g}", p.steps));
    for (double s : {p.loading_sigma, p.thickness_sigma, p.d50_sigma, p.measurement_sigma_xy})
        if (!(s >= 0) || !std::isfinite(s)) throw Error(fmt::format("a sigma must be zero or positive, not {:g}", s));
    const AssessOptions o = quick_options();
    LayerToleranceResult r;
    r.draws = p.draws;
    r.seed = p.seed;
    r.steps_limit = p.steps;
    r.target = p.ellipse.centre;
    r.nominal_xy = evaluate_layer(p.design, std::nullopt, o).assessment.xy;
    r.nominal_steps = macadam_steps(p.ellipse, r.nominal_xy);

    std::mt19937_64 rng(p.seed);
    std::normal_distribution<double> normal(0.0, 1.0);
    std::vector<double> steps, xs, ys, leak, efficacy;
    for (std::size_t k = 0; k < p.draws; ++k) {
        LayerDesign d = p.design;
        for (auto& c : d.components) {
            const double zl = normal(rng), zd = normal(rng);
            c.loading *= std::max(kMinFactor, 1 + p.loading_sigma * zl);
            c.phosphor.d50_um *= std::max(kMinFactor, 1 + p.d50_sigma * zd);
        }
        const double zt = normal(rng), zx = normal(rng), zy = normal(rng);
        d.thickness_um *= std::max(kMinFactor, 1 + p.thickness_sigma * zt);
        LayerResult m;
        try {
            m = evaluate_layer(d, std::nullopt, o);
        } catch (const Error&) {
            ++r.failed;  // e.g. the drawn loadings sum to more than the layer can hold: not a module
            continue;
        }
        const Chromaticity xy{m.assessment.xy.x + p.measurement_sigma_xy * zx, m.assessment.xy.y + p.measurement_sigma_xy * zy};
        const double s = macadam_steps(p.ellipse, xy);
        if (!std::isfinite(s)) {
            ++r.failed;
            continue;
        }
        steps.push_back(s);
        xs.push_back(xy.x);
        ys.push_back(xy.y);
        leak.push_back(m.pump_leak_fraction);
        efficacy.push_back(m.efficacy_lm_per_W_pump);
        if (s <= p.steps) ++r.inside;
    }
    if (steps.empty()) throw Error(fmt::format("no draw of {} could be evaluated: the sigmas are too large", p.draws));
    const auto sd = [](const std::vector<double>& v) { return v.size() > 1 ? sample_sd(v) : 0.0; };
    r.mean_steps = mean(steps);
    r.sd_steps = sd(steps);
    r.mean_x = mean(xs), r.sd_x = sd(xs);
    r.mean_y = mean(ys), r.sd_y = sd(ys);
    r.mean_leak = mean(leak), r.sd_leak = sd(leak);
    r.mean_efficacy = mean(efficacy), r.sd_efficacy = sd(efficacy);
    std::sort(steps.begin(), steps.end());
    r.p50 = quantile_sorted(steps, 0.50);
    r.p90 = quantile_sorted(steps, 0.90);
    r.p95 = quantile_sorted(steps, 0.95);
    r.max_steps = steps.back();
    const double N = static_cast<double>(p.draws);
    r.yield = static_cast<double>(r.inside) / N;  // a module that could not be evaluated is not inside
    r.yield_standard_error = std::sqrt(r.yield * (1 - r.yield) / N);
    return r;
}

std::vector<SensitivityRow> layer_sensitivity(const LayerDesign& design, double step) {
    if (!(step > 0 && step < 0.5)) throw Error(fmt::format("sensitivity step must lie in (0, 0.5), not {:g}", step));
    const AssessOptions o = quick_options();
    // Central difference over +-step/2 of the quantity, scaled to a change of `step` (relative).
    auto row = [&](const std::string& label, double value, auto&& set) {
        LayerDesign lo = design, hi = design;
        set(lo, value * (1 - step / 2));
        set(hi, value * (1 + step / 2));
        const Assessment a = evaluate_layer(lo, std::nullopt, o).assessment, b = evaluate_layer(hi, std::nullopt, o).assessment;
        SensitivityRow r;
        r.label = label;
        r.mass_fraction = value;
        r.d_u_prime = b.uv_prime.u - a.uv_prime.u;
        r.d_v_prime = b.uv_prime.v - a.uv_prime.v;
        r.d_cct_K = a.cct.valid && b.cct.valid ? b.cct.cct_K - a.cct.cct_K : std::nan("");
        r.d_duv = b.cct.duv - a.cct.duv;
        r.d_ra = a.rendering && b.rendering ? b.rendering->ra - a.rendering->ra : std::nan("");
        return r;
    };
    std::vector<SensitivityRow> rows;
    for (std::size_t i = 0; i < design.components.size(); ++i)
        rows.push_back(row(design.components[i].label, design.components[i].loading, [i](LayerDesign& d, double v) { d.components[i].loading = v; }));
    rows.push_back(row("thickness", design.thickness_um, [](LayerDesign& d, double v) { d.thickness_um = v; }));
    return rows;
}

}  // namespace lampwright
