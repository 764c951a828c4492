#include "lampwright/design/tradeoff.hpp"

#include "lampwright/core/error.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>

namespace lampwright {

namespace {

constexpr double kTopMargin = 0.02;  // the sweep stops this far below the best reachable floor figure

FitObjective objective_for(FrontKind k) {
    switch (k) {
        case FrontKind::ra_efficacy: return FitObjective::efficacy;
        case FrontKind::ra_ler: return FitObjective::ler;
        case FrontKind::ra_r9: return FitObjective::ra;
        case FrontKind::rf_efficacy: return FitObjective::efficacy;
    }
    return FitObjective::efficacy;
}

// The objective that finds the top of the floor's range.
FitObjective floor_objective_for(FrontKind k) {
    switch (k) {
        case FrontKind::ra_r9: return FitObjective::r9;
        case FrontKind::rf_efficacy: return FitObjective::rf;
        default: return FitObjective::ra;
    }
}

double ra_of(const BlendResult& r) { return r.assessment.rendering ? r.assessment.rendering->ra : -1e3; }
double r9_of(const BlendResult& r) { return r.assessment.rendering ? r.assessment.rendering->ri[8] : -1e3; }

double rf_of(const BlendResult& r) { return r.assessment.fidelity ? r.assessment.fidelity->rf : -1e3; }

double floor_value(FrontKind k, const BlendResult& r) {
    if (k == FrontKind::ra_r9) return r9_of(r);
    if (k == FrontKind::rf_efficacy) return rf_of(r);
    return ra_of(r);
}

double objective_value(FrontKind k, const BlendResult& r) {
    switch (k) {
        case FrontKind::ra_efficacy:
        case FrontKind::rf_efficacy: return r.luminous_efficacy_absorbed;
        case FrontKind::ra_ler: return r.assessment.ler_lm_per_W;
        case FrontKind::ra_r9: return ra_of(r);
    }
    return 0;
}

void set_floor(FrontKind k, FitProblem& p, std::optional<double> v) {
    if (k == FrontKind::ra_r9) p.min_r9 = v;
    else if (k == FrontKind::rf_efficacy) p.min_rf = v;
    else p.min_ra = v;
}

FrontPoint point_from(FrontKind k, double floor, const FitResult& r) {
    FrontPoint pt;
    pt.floor = floor;
    pt.feasible = true;
    pt.objective = objective_value(k, r.result);
    pt.ra = ra_of(r.result);
    pt.r9 = r9_of(r.result);
    pt.ler = r.result.assessment.ler_lm_per_W;
    pt.efficacy = r.result.luminous_efficacy_absorbed;
    const auto& fid = r.result.assessment.fidelity;
    pt.rf = fid ? fid->rf : std::numeric_limits<double>::quiet_NaN();
    pt.rg = fid ? fid->rg : std::numeric_limits<double>::quiet_NaN();
    pt.xy = r.result.assessment.xy;
    pt.distance_uv_prime = r.distance_uv_prime;
    pt.mass_fractions = r.mass_fractions;
    return pt;
}

}  // namespace

FrontKind parse_front_kind(const std::string& name) {
    if (name == "ra-efficacy") return FrontKind::ra_efficacy;
    if (name == "ra-ler") return FrontKind::ra_ler;
    if (name == "ra-r9") return FrontKind::ra_r9;
    if (name == "rf-efficacy") return FrontKind::rf_efficacy;
    throw Error(fmt::format("unknown trade-off front '{}': use ra-efficacy, ra-ler, ra-r9 or rf-efficacy", name));
}

std::string front_kind_name(FrontKind k) {
    switch (k) {
        case FrontKind::ra_efficacy: return "ra-efficacy";
        case FrontKind::ra_ler: return "ra-ler";
        case FrontKind::ra_r9: return "ra-r9";
        case FrontKind::rf_efficacy: return "rf-efficacy";
    }
    return "";
}

std::string front_objective_label(FrontKind k) {
    switch (k) {
        case FrontKind::ra_efficacy:
        case FrontKind::rf_efficacy: return "efficacy";
        case FrontKind::ra_ler: return "LER";
        case FrontKind::ra_r9: return "Ra";
    }
    return "";
}

std::string front_floor_label(FrontKind k) {
    if (k == FrontKind::ra_r9) return "R9";
    if (k == FrontKind::rf_efficacy) return "Rf";
    return "Ra";
}

TradeoffFront tradeoff_front(const FitProblem& problem, FrontKind kind, int points, const FitOptions& options) {
    if (points < 2 || points > 1000) throw Error(fmt::format("a trade-off front needs 2 to 1000 points, not {}", points));
    TradeoffFront f;
    f.kind = kind;
    f.objective_label = front_objective_label(kind);
    f.floor_label = front_floor_label(kind);
    f.objective_unit = kind == FrontKind::ra_efficacy || kind == FrontKind::rf_efficacy ? "lm/W absorbed" : kind == FrontKind::ra_ler ? "lm/W" : "";

    FitProblem base = problem;
    base.objective = objective_for(kind);
    set_floor(kind, base, std::nullopt);

    // Every feasible blend found by any solve of the sweep: they share the target, the limits and
    // the other floors, so each one serves every floor it meets.
    std::vector<FitResult> pool;
    auto run = [&](const FitProblem& q) {
        FitResult r = solve(q, options);
        ++f.solves;
        f.evaluations += r.evaluations;
        if (r.feasible) pool.push_back(r);
        return r;
    };

    const FitResult best_objective = run(base);
    if (!best_objective.feasible)
        throw Error(fmt::format("no trade-off front: no blend meets the target and limits ({})", best_objective.message));
    FitProblem top = base;
    top.objective = floor_objective_for(kind);
    const FitResult best_floor = run(top);
    f.floor_low = floor_value(kind, best_objective.result);
    f.floor_high = best_floor.feasible ? floor_value(kind, best_floor.result) - kTopMargin : f.floor_low;
    if (f.floor_high < f.floor_low) f.floor_high = f.floor_low;

    std::vector<double> floors;
    std::vector<std::optional<std::size_t>> own;  // index into pool of each point's own answer
    std::vector<double> warm = best_objective.mass_fractions;
    for (int k = 0; k < points; ++k) {
        const double eps = f.floor_low + (f.floor_high - f.floor_low) * k / (points - 1);
        floors.push_back(eps);
        FitProblem q = base;
        set_floor(kind, q, eps);
        // Warm start: the previous point's blend (its floor is lower, so it may fall just short).
        for (std::size_t i = 0; i < q.blend.components.size(); ++i)
            if (warm[i] > 0) q.blend.components[i].mass_fraction = warm[i];
        const FitResult r = run(q);
        own.push_back(r.feasible ? std::optional<std::size_t>(pool.size() - 1) : std::nullopt);
        if (r.feasible) warm = r.mass_fractions;
    }

    int borrowed = 0, missing = 0;
    for (int k = 0; k < points; ++k) {
        const double eps = floors[static_cast<std::size_t>(k)];
        std::optional<std::size_t> best;
        for (std::size_t j = 0; j < pool.size(); ++j) {
            if (floor_value(kind, pool[j].result) < eps) continue;
            if (!best || objective_value(kind, pool[j].result) > objective_value(kind, pool[*best].result)) best = j;
        }
        // Prefer the point's own answer when it is as good.
        const auto& mine = own[static_cast<std::size_t>(k)];
        if (mine && best && objective_value(kind, pool[*mine].result) >= objective_value(kind, pool[*best].result)) best = mine;
        if (!best) {
            FrontPoint pt;
            pt.floor = eps;
            f.points.push_back(pt);
            ++missing;
            continue;
        }
        FrontPoint pt = point_from(kind, eps, pool[*best]);
        pt.from_other_point = !(mine && *mine == *best);
        borrowed += pt.from_other_point ? 1 : 0;
        f.points.push_back(pt);
    }
    f.message = fmt::format("{} points, {} >= {:.2f} to {:.2f}; {} solves", points, f.floor_label, f.floor_low, f.floor_high, f.solves);
    if (borrowed) f.message += fmt::format("; {} point(s) use a better blend found by another point's solve", borrowed);
    if (missing) f.message += fmt::format("; no feasible blend at {} point(s)", missing);
    if (f.floor_high <= f.floor_low)
        f.message += fmt::format("; no trade-off here: the blend with the best {} has (within 0.02) the best {} too", f.objective_label, f.floor_label);
    return f;
}

std::vector<std::vector<std::size_t>> k_subsets(std::size_t n, int k, const std::string& what) {
    if (n > 8) throw Error(fmt::format("choosing {}: at most 8 components, not {}", what, n));
    if (k < 1 || static_cast<std::size_t>(k) > n)
        throw Error(fmt::format("choosing {} of {} {}: the number to choose must lie between 1 and {}", k, n, what, n));
    // Lexicographic order: a mask of n bits with k set, stepped by prev_permutation.
    std::vector<std::vector<std::size_t>> out;
    std::vector<bool> mask(n, false);
    std::fill(mask.begin(), mask.begin() + k, true);
    do {
        std::vector<std::size_t> idx;
        for (std::size_t i = 0; i < n; ++i)
            if (mask[i]) idx.push_back(i);
        out.push_back(std::move(idx));
    } while (std::prev_permutation(mask.begin(), mask.end()));
    return out;
}

SubsetChoice choose_components(const FitProblem& problem, int k, const FitOptions& options) {
    const std::size_t n = problem.blend.components.size();
    const auto subsets = k_subsets(n, k, "components");
    SubsetChoice out;
    out.k = k;
    const bool smaller_is_better = problem.objective == FitObjective::closest_to_start;
    std::optional<FitResult> best_fit;
    for (const auto& indices : subsets) {
        SubsetTrial t;
        t.indices = indices;
        std::vector<bool> mask(n, false);
        for (std::size_t i : indices) mask[i] = true;
        for (std::size_t i : t.indices) t.labels += (t.labels.empty() ? "" : " + ") + problem.blend.components[i].label;
        std::string left_out_min;
        for (std::size_t i = 0; i < n; ++i) {
            if (mask[i]) continue;
            const auto& c = problem.blend.components[i];
            double lo = c.min_fraction.value_or(0.0);
            if (i < problem.min_fraction.size()) lo = problem.min_fraction[i];
            if (lo > 0) left_out_min += (left_out_min.empty() ? "" : ", ") + c.label;
        }
        if (!left_out_min.empty()) {
            t.message = "leaves out " + left_out_min + ", which must have a fraction above zero";
            out.trials.push_back(t);
            continue;
        }
        FitProblem q = problem;
        q.blend.components.clear();
        q.min_fraction.clear();
        q.max_fraction.clear();
        for (std::size_t i : t.indices) {
            q.blend.components.push_back(problem.blend.components[i]);
            if (i < problem.min_fraction.size()) q.min_fraction.push_back(problem.min_fraction[i]);
            if (i < problem.max_fraction.size()) q.max_fraction.push_back(problem.max_fraction[i]);
        }
        // A shorter limits vector leaves the rest to the components; keep them aligned.
        if (!problem.min_fraction.empty() && q.min_fraction.size() != t.indices.size()) q.min_fraction.clear();
        if (!problem.max_fraction.empty() && q.max_fraction.size() != t.indices.size()) q.max_fraction.clear();
        try {
            FitResult r = solve(q, options);
            t.feasible = r.feasible;
            t.objective_value = r.objective_value;
            t.message = r.message;
            if (r.feasible) {
                const bool better = !best_fit || (smaller_is_better ? r.objective_value < best_fit->objective_value
                                                                    : r.objective_value > best_fit->objective_value);
                if (better) {
                    std::vector<double> w(n, 0.0);
                    for (std::size_t j = 0; j < t.indices.size(); ++j) w[t.indices[j]] = r.mass_fractions[j];
                    r.mass_fractions = w;
                    r.constraints = check_constraints(problem, w, r.result);
                    r.feasible = std::all_of(r.constraints.begin(), r.constraints.end(), [](const ConstraintReport& c) { return c.satisfied; });
                    r.message = fmt::format("best {} of {} components: {}; {}", k, n, t.labels, r.message);
                    best_fit = std::move(r);
                    out.best = out.trials.size();
                }
            }
        } catch (const Error& e) {
            t.message = e.what();
        }
        out.trials.push_back(t);
    }
    out.found = best_fit.has_value();
    if (best_fit) out.result = std::move(*best_fit);
    return out;
}

}  // namespace lampwright
