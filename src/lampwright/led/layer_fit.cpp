#include "lampwright/led/layer_fit.hpp"

#include "lampwright/core/error.hpp"
#include "lampwright/core/format.hpp"

#include <fmt/format.h>
#include <nlopt.hpp>

#include <algorithm>
#include <cmath>
#include <limits>

namespace lampwright {

namespace {

// The solver aims a little inside the tolerance so that the loadings, rounded to the 6 decimals a
// design file holds, still meet it when re-checked.
constexpr double kToleranceMargin = 0.98;

struct Context {
    const LayerFitProblem* p;
    int evaluations = 0;
    bool phase_two = false;
};

LayerDesign design_from(const LayerFitProblem& p, const std::vector<double>& z) {
    LayerDesign d = p.design;
    for (std::size_t i = 0; i < d.components.size(); ++i) d.components[i].loading = std::exp(z[i]);
    if (p.fit_thickness) d.thickness_um = std::exp(z.back());
    return d;
}

struct Figures {
    double ratio = 1e3;  // distance from the target / tolerance (target_distance_ratio2)
    double objective = 0, ra = -1e3, r9 = -1e3, total_loading = 0;
};

Figures figures(Context& c, const std::vector<double>& z) {
    ++c.evaluations;
    const LayerFitProblem& p = *c.p;
    Figures f;
    const LayerDesign d = design_from(p, z);
    for (const auto& comp : d.components) f.total_loading += comp.loading;
    if (f.total_loading >= 0.99) return f;
    AssessOptions o;
    o.spectral_features = false;
    LayerResult r;
    try {
        r = evaluate_layer(d, std::nullopt, o);
    } catch (const Error&) {
        return f;
    }
    f.ratio = std::sqrt(target_distance_ratio2(p.target, p.tolerance_uv_prime, r.assessment));
    if (r.assessment.rendering) f.ra = r.assessment.rendering->ra, f.r9 = r.assessment.rendering->ri[8];
    double change = 0;
    for (std::size_t i = 0; i < d.components.size(); ++i) change += std::abs(d.components[i].loading - p.design.components[i].loading);
    f.objective = objective_figure(p.objective, {p.r9_weight, p.rg_weight}, r.assessment, r.efficacy_lm_per_W_pump, change);
    return f;
}

struct Constraint {
    Context* c;
    int which;  // 0 distance, 1 total loading, 2 Ra, 3 R9
};

double objective_fn(unsigned n, const double* z, double*, void* data) {
    auto* c = static_cast<Context*>(data);
    const Figures f = figures(*c, std::vector<double>(z, z + n));
    return c->phase_two ? -f.objective : f.ratio * f.ratio;
}

double constraint_fn(unsigned n, const double* z, double*, void* data) {
    auto* k = static_cast<Constraint*>(data);
    const Figures f = figures(*k->c, std::vector<double>(z, z + n));
    const LayerFitProblem& p = *k->c->p;
    switch (k->which) {
        case 0: return f.ratio - kToleranceMargin;
        case 1: return f.total_loading - p.max_total_loading;
        case 2: return *p.min_ra - f.ra;
        default: return *p.min_r9 - f.r9;
    }
}

}  // namespace

LayerFitResult fit_layer(const LayerFitProblem& p, int max_evaluations, const FitProgress& progress) {
    const std::size_t n = p.design.components.size();
    if (n == 0) throw Error("the design has no components to fit");
    Context ctx{&p};
    const unsigned m = static_cast<unsigned>(n + (p.fit_thickness ? 1 : 0));
    std::vector<double> lower(m, std::log(1e-5)), upper(m, std::log(p.max_total_loading));
    // A component's own min_loading / max_loading narrow its bounds (kept by NLopt as box bounds).
    for (std::size_t i = 0; i < n; ++i) {
        const auto& c = p.design.components[i];
        if (c.min_loading) lower[i] = std::max(lower[i], std::log(std::max(*c.min_loading, 1e-5)));
        if (c.max_loading) upper[i] = std::min(upper[i], std::log(std::max(*c.max_loading, 1e-5)));
        if (lower[i] > upper[i])
            throw Error(fmt::format("component '{}': min_loading {:g} is above its upper limit {:g} (max_loading or the total loading limit)", c.label,
                                    std::exp(lower[i]), std::exp(upper[i])));
    }
    if (p.fit_thickness) lower.back() = std::log(p.min_thickness_um), upper.back() = std::log(p.max_thickness_um);
    if (p.design.thickness_um <= 0 && !p.fit_thickness) throw Error("a layer of zero thickness cannot be fitted by its loadings: fit the thickness too");

    // Phase 1: onto the target, from the start and from deterministic variations of it.
    std::vector<double> start(m);
    for (std::size_t i = 0; i < n; ++i) start[i] = std::clamp(std::log(std::max(p.design.components[i].loading, 1e-5)), lower[i], upper[i]);
    if (p.fit_thickness) start.back() = std::log(std::clamp(p.design.thickness_um, p.min_thickness_um, p.max_thickness_um));
    std::vector<std::vector<double>> starts{start};
    for (double scale : {0.5, 2.0})
        for (std::size_t i = 0; i < n; ++i) {
            auto s = start;
            s[i] = std::clamp(s[i] + std::log(scale), lower[i], upper[i]);
            starts.push_back(s);
        }
    std::vector<double> best = start;
    double best_value = std::numeric_limits<double>::infinity();
    std::vector<std::vector<double>> on_target;  // phase-1 end points inside the tolerance
    Constraint loading_c{&ctx, 1};
    for (std::size_t k = 0; k < starts.size(); ++k) {
        if (progress && !progress(static_cast<int>(k), static_cast<int>(starts.size()))) throw FitCancelled();
        const auto& s0 = starts[k];
        nlopt::opt o(nlopt::LN_COBYLA, m);
        o.set_lower_bounds(lower);
        o.set_upper_bounds(upper);
        o.set_min_objective(objective_fn, &ctx);
        o.add_inequality_constraint(constraint_fn, &loading_c, 1e-9);
        o.set_xtol_rel(1e-7);
        o.set_maxeval(max_evaluations / static_cast<int>(starts.size() + 1));
        std::vector<double> z = s0;
        double value = 0;
        try {
            o.optimize(z, value);
        } catch (const nlopt::roundoff_limited&) {
        } catch (const std::invalid_argument&) {
        }
        value = objective_fn(m, z.data(), nullptr, &ctx);
        if (std::sqrt(value) <= kToleranceMargin) on_target.push_back(z);
        if (value < best_value) best_value = value, best = z;
        if (std::sqrt(best_value) < 0.2 && p.objective == FitObjective::closest_to_start) break;
    }

    // Phase 2: the objective within the tolerance, from every phase-1 end point on the target
    // (the objective has several local optima; the best is kept).
    if (on_target.empty() && std::sqrt(best_value) <= 1.0) on_target.push_back(best);
    if (!on_target.empty()) {
        ctx.phase_two = true;
        Figures best_f = figures(ctx, on_target.front());
        best = on_target.front();
        for (const auto& z0 : on_target) {
            const Figures f0 = figures(ctx, z0);
            if (f0.objective > best_f.objective) best_f = f0, best = z0;
        }
        for (const auto& z0 : on_target) {
            nlopt::opt o(nlopt::LN_COBYLA, m);
            o.set_lower_bounds(lower);
            o.set_upper_bounds(upper);
            o.set_max_objective([](unsigned k, const double* z, double* g, void* d) { return -objective_fn(k, z, g, d); }, &ctx);
            Constraint distance_c{&ctx, 0}, ra_c{&ctx, 2}, r9_c{&ctx, 3};
            o.add_inequality_constraint(constraint_fn, &distance_c, 1e-9);
            o.add_inequality_constraint(constraint_fn, &loading_c, 1e-9);
            if (p.min_ra) o.add_inequality_constraint(constraint_fn, &ra_c, 1e-9);
            if (p.min_r9) o.add_inequality_constraint(constraint_fn, &r9_c, 1e-9);
            o.set_xtol_rel(1e-6);
            o.set_maxeval(max_evaluations / (2 * static_cast<int>(on_target.size())));
            std::vector<double> z = z0;
            double value = 0;
            try {
                o.optimize(z, value);
            } catch (const nlopt::roundoff_limited&) {
            } catch (const std::invalid_argument&) {
            }
            const Figures f = figures(ctx, z);
            const bool ok = f.ratio <= kToleranceMargin * (1 + 1e-6) && f.total_loading <= p.max_total_loading &&
                            (!p.min_ra || f.ra >= *p.min_ra) && (!p.min_r9 || f.r9 >= *p.min_r9);
            if (ok && f.objective > best_f.objective) best_f = f, best = z;
        }
    }

    LayerFitResult r;
    r.evaluations = ctx.evaluations;
    r.design = design_from(p, best);
    r.design.name = p.design.name + " (fitted)";  // as a fitted blend recipe is named: not to be taken for the start
    for (auto& c : r.design.components) c.loading = std::round(c.loading * 1e6) / 1e6;  // as written to a design file
    r.evaluation = evaluate_layer_design(r.design);
    const auto& a = r.evaluation.operating.assessment;
    const UV uv = a.uv_prime, target_uv = uv_1976_from_xy(p.target.xy);
    r.distance_uv_prime = std::hypot(uv.u - target_uv.u, uv.v - target_uv.v);
    if (p.target.ellipse) r.macadam_steps = macadam_steps(*p.target.ellipse, a.xy);
    const double ra = a.rendering ? a.rendering->ra : NAN, r9 = a.rendering ? a.rendering->ri[8] : NAN;
    double total = 0;
    for (const auto& c : r.design.components) total += c.loading;
    // Each quantity with the decimals it has everywhere else (delta u'v' 5, steps 2, loadings 6 as
    // in the design file, Ra and R9 2, as the blend fit's constraints), never "%g" ("7.0399e-07").
    auto add = [&](const std::string& name, double value, double limit, bool ok, bool active, int decimals) {
        r.constraints.push_back({name, value, limit, ok, active,
                                 fmt::format("{:<6} {} {}, limit {:g}{}", ok ? "ok" : "FAILED", name, format_fixed(value, decimals, "n/a"), limit,
                                             active ? "  [active]" : "")});
    };
    if (r.macadam_steps)
        add("MacAdam steps from the target", *r.macadam_steps, p.target.ellipse_steps, *r.macadam_steps <= p.target.ellipse_steps * 1.001,
            *r.macadam_steps > 0.95 * p.target.ellipse_steps, 2);
    else
        add("delta u'v' from the target", r.distance_uv_prime, p.tolerance_uv_prime, r.distance_uv_prime <= p.tolerance_uv_prime * 1.001,
            r.distance_uv_prime > 0.95 * p.tolerance_uv_prime, 5);
    add("total loading", total, p.max_total_loading, total <= p.max_total_loading, total > 0.99 * p.max_total_loading, 6);
    // The design's own limits (the loadings were rounded to 6 decimals: a 1e-6 slack).
    for (const auto& c : r.design.components) {
        if (c.min_loading) add("loading of " + c.label + " >=", c.loading, *c.min_loading, c.loading >= *c.min_loading - 1e-6, c.loading < *c.min_loading + 1e-4, 6);
        if (c.max_loading) add("loading of " + c.label + " <=", c.loading, *c.max_loading, c.loading <= *c.max_loading + 1e-6, c.loading > *c.max_loading - 1e-4, 6);
    }
    if (p.min_ra) add("Ra minimum", ra, *p.min_ra, ra >= *p.min_ra - 1e-6, std::abs(ra - *p.min_ra) < 0.05, 2);
    if (p.min_r9) add("R9 minimum", r9, *p.min_r9, r9 >= *p.min_r9 - 1e-6, std::abs(r9 - *p.min_r9) < 0.05, 2);
    r.feasible = true;
    for (const auto& c : r.constraints) r.feasible = r.feasible && c.satisfied;
    const Figures f = figures(ctx, best);
    r.objective_value = f.objective;
    r.message = r.feasible ? fmt::format("feasible: {} at {:g} degC, {} evaluations", fit_objective_name(p.objective), r.design.temperature_C, r.evaluations)
                           : fmt::format("no feasible layer: the closest reached is {:.4f} from the target in u'v'{}; "
                                         "try other phosphors, fitting the thickness, or a larger loading limit",
                                         r.distance_uv_prime,
                                         r.macadam_steps ? fmt::format(" ({:.2f} MacAdam steps, limit {:g})", *r.macadam_steps, p.target.ellipse_steps)
                                                         : fmt::format(" (tolerance {:g})", p.tolerance_uv_prime));
    return r;
}

LayerSubsetChoice choose_layer_components(const LayerFitProblem& problem, int k, int max_evaluations) {
    LayerSubsetChoice out;
    out.k = k;
    for (const auto& indices : k_subsets(problem.design.components.size(), k, "layer components")) {
        SubsetTrial t;
        t.indices = indices;
        LayerFitProblem q = problem;
        q.design.components.clear();
        for (std::size_t i : indices) {
            q.design.components.push_back(problem.design.components[i]);
            t.labels += (t.labels.empty() ? "" : " + ") + problem.design.components[i].label;
        }
        try {
            LayerFitResult r = fit_layer(q, max_evaluations);
            t.feasible = r.feasible;
            t.objective_value = r.objective_value;
            t.message = r.message;
            if (r.feasible && (!out.found || r.objective_value > out.result.objective_value)) {
                r.message = fmt::format("best {} of {} components: {}; {}", k, problem.design.components.size(), t.labels, r.message);
                out.result = std::move(r);
                out.found = true;
                out.best = out.trials.size();
            }
        } catch (const Error& e) {
            t.message = e.what();
        }
        out.trials.push_back(t);
    }
    return out;
}

TradeoffFront layer_tradeoff_front(const LayerFitProblem& problem, FrontKind kind, int points, int max_evaluations) {
    if (kind == FrontKind::rf_efficacy) throw Error("the rf-efficacy front is for blend recipes: layer fits take no Rf floor");
    const FitObjective objective = kind == FrontKind::ra_efficacy ? FitObjective::efficacy : kind == FrontKind::ra_ler ? FitObjective::ler : FitObjective::ra;
    const FitObjective top_objective = kind == FrontKind::ra_r9 ? FitObjective::r9 : FitObjective::ra;
    TradeoffFront f = sweep_front(kind, points, [&](std::optional<double> floor, bool top, const std::vector<double>& warm) {
        LayerFitProblem q = problem;
        q.objective = top ? top_objective : objective;
        if (kind == FrontKind::ra_r9) q.min_r9 = floor;
        else q.min_ra = floor;
        for (std::size_t i = 0; i < warm.size() && i < q.design.components.size(); ++i)
            if (warm[i] > 0) q.design.components[i].loading = warm[i];
        const LayerFitResult r = fit_layer(q, max_evaluations);
        FrontSolve s{r.feasible, r.message, r.evaluations, {}};
        if (!r.feasible) return s;
        const auto& o = r.evaluation.operating;
        const auto& a = o.assessment;
        FrontPoint& pt = s.point;
        pt.feasible = true;
        pt.ra = a.rendering ? a.rendering->ra : NAN;
        pt.r9 = a.rendering ? a.rendering->ri[8] : NAN;
        pt.ler = a.ler_lm_per_W;
        pt.efficacy = o.efficacy_lm_per_W_pump;
        pt.rf = a.fidelity ? a.fidelity->rf : NAN;
        pt.rg = a.fidelity ? a.fidelity->rg : NAN;
        pt.objective = kind == FrontKind::ra_efficacy ? pt.efficacy : kind == FrontKind::ra_ler ? pt.ler : pt.ra;
        pt.xy = a.xy;
        pt.distance_uv_prime = r.distance_uv_prime;
        for (const auto& c : r.design.components) pt.mass_fractions.push_back(c.loading);
        return s;
    });
    f.name = problem.design.name;
    f.target = problem.target;
    for (const auto& c : problem.design.components) f.labels.push_back(c.label);
    f.amount = "loading";
    f.objective_unit = kind == FrontKind::ra_efficacy ? "lm/W pump" : kind == FrontKind::ra_ler ? "lm/W" : "";
    return f;
}

}  // namespace lampwright
