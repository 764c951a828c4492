#include "lampwright/design/optimiser.hpp"

#include "lampwright/colour/colour_fidelity.hpp"
#include "lampwright/colour/colour_rendering.hpp"
#include "lampwright/core/error.hpp"

#include <Eigen/Dense>
#include <fmt/format.h>
#include <nlopt.hpp>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>

namespace lampwright {

namespace {

// Inner margins, so that answers re-checked on fractions rounded to 6 decimals still hold.
constexpr double kChromaticityMargin = 0.99;  // solve to 99 % of the tolerance
constexpr double kIndexMargin = 0.01;         // Ra, R9, LER, Rf, Rg, Rcs,h1 bounds moved inwards by 0.01
constexpr double kDropFraction = 1e-5;        // fractions below this are set to zero
constexpr double kActiveFraction = 1e-4;      // a fraction this close to its limit is active
constexpr double kFractionRounding = 5e-7;    // a result's fractions are rounded to 6 decimals (tidy)
constexpr double kPenalty = 1e3;              // objective where CCT or Ra does not exist

double round6(double v) { return std::round(v * 1e6) / 1e6; }

// The blend as linear sums of precomputed per-component quantities: sample tristimuli (CIE 13.3
// TCS and the white; with_fidelity: also the CIE 224 CES, 10-degree observer), radiant integral
// and phosphor luminous flux per unit photon share.
class FastBlend {
public:
    explicit FastBlend(const BlendInput& in, bool with_fidelity = false) : basis_(blend_basis(in)), with_fidelity_(with_fidelity) {
        for (std::size_t i = 0; i < basis_.light.size(); ++i) {
            const auto v = colour_range_values(basis_.light[i]);
            tri_.push_back(cie133_tristimuli(v.data()));
            if (with_fidelity_) ces_.push_back(cie224_tristimuli(cie224_range_values(basis_.light[i]).data()));
            radiant_.push_back(radiant_integral(basis_.light[i]));
            phosphor_lm_.push_back(kKm * tristimulus(basis_.phosphor_light[i]).Y);
            if (!(basis_.share_weight[i] > 0))
                throw Error(fmt::format("component '{}' does not absorb the {}: its fraction cannot change the light",
                                        in.components[i].label, in.excitation.describe()));
        }
    }
    std::size_t size() const { return tri_.size(); }
    const BlendBasis& basis() const { return basis_; }
    XYZ component_xyz(std::size_t i) const { return {tri_[i][0], tri_[i][1], tri_[i][2]}; }

    struct Eval {
        Assessment a;
        double efficacy = 0;  // lm of phosphor light per W absorbed
    };
    Eval evaluate(const std::vector<double>& w) const {
        const std::vector<double> s = photon_shares(basis_, w);
        SampleTristimuli t{};
        double radiant = 0, lm = 0;
        for (std::size_t i = 0; i < s.size(); ++i) {
            for (std::size_t k = 0; k < t.size(); ++k) t[k] += s[i] * tri_[i][k];
            radiant += s[i] * radiant_[i];
            lm += s[i] * phosphor_lm_[i];
        }
        ++evaluations;
        Eval e{assess_from_tristimuli(t, radiant), lm};
        if (with_fidelity_ && e.a.cct.valid) {
            // CIE 224 sums are linear in the light too (CIE 224:2017, 4.2).
            CesTristimuli c{};
            for (std::size_t i = 0; i < s.size(); ++i)
                for (std::size_t k = 0; k < c.size(); ++k) c[k] += s[i] * ces_[i][k];
            try {
                e.a.fidelity = colour_fidelity_from_tristimuli(c, e.a.cct.cct_K);
            } catch (const Error&) {
            }
        }
        return e;
    }
    mutable int evaluations = 0;

private:
    BlendBasis basis_;
    bool with_fidelity_ = false;
    std::vector<SampleTristimuli> tri_;
    std::vector<CesTristimuli> ces_;
    std::vector<double> radiant_, phosphor_lm_;
};

double objective_of(const FitProblem& p, const Assessment& a, double efficacy, const std::vector<double>& w,
                    const std::vector<double>& w0) {
    double change = 0;
    if (p.objective == FitObjective::closest_to_start)
        for (std::size_t i = 0; i < w.size(); ++i) change += std::abs(w[i] - w0[i]);
    return objective_figure(p.objective, {p.r9_weight, p.rg_weight}, a, efficacy, change);
}

// Chromaticity constraint value: (distance / tolerance)^2, <= 1 inside.
double chromaticity_ratio2(const FitProblem& p, const Assessment& a) { return target_distance_ratio2(p.target, p.tolerance_uv_prime, a); }

// The default objective ("smallest change") aims at the target centre: the distance from the
// centre comes first (this weight makes 1 % of the tolerance cost as much as a 0.01 change of
// the fractions, so the search does not stop at the edge of the tolerance), the change second.
// With a maximised objective the tolerance is only a constraint.
constexpr double kCentreWeight = 100.0;
double search_objective(const FitProblem& p, const Assessment& a, double efficacy, const std::vector<double>& w,
                        const std::vector<double>& w0) {
    const double f = objective_of(p, a, efficacy, w, w0);
    if (p.objective != FitObjective::closest_to_start) return f;
    return f - kCentreWeight * chromaticity_ratio2(p, a);
}

struct Limits {
    std::vector<double> lo, hi;
};

Limits limits_of(const FitProblem& p) {
    const std::size_t n = p.blend.components.size();
    Limits l{std::vector<double>(n, 0.0), std::vector<double>(n, 1.0)};
    for (std::size_t i = 0; i < n; ++i) {
        const auto& c = p.blend.components[i];
        if (c.min_fraction) l.lo[i] = *c.min_fraction;
        if (c.max_fraction) l.hi[i] = *c.max_fraction;
        if (i < p.min_fraction.size()) l.lo[i] = p.min_fraction[i];
        if (i < p.max_fraction.size()) l.hi[i] = p.max_fraction[i];
        if (!(l.lo[i] >= 0 && l.hi[i] <= 1 && l.lo[i] <= l.hi[i]))
            throw Error(fmt::format("component '{}': fraction limits must satisfy 0 <= min <= max <= 1, not {:g} and {:g}", c.label,
                                    l.lo[i], l.hi[i]));
    }
    const double slo = std::accumulate(l.lo.begin(), l.lo.end(), 0.0), shi = std::accumulate(l.hi.begin(), l.hi.end(), 0.0);
    if (slo > 1 + 1e-12) throw Error(fmt::format("the minimum fractions add up to {:g}, more than 1", slo));
    if (shi < 1 - 1e-12) throw Error(fmt::format("the maximum fractions add up to {:g}, less than 1", shi));
    return l;
}

std::vector<double> normalised_start(const FitProblem& p) {
    std::vector<double> w;
    for (const auto& c : p.blend.components) w.push_back(std::max(0.0, c.mass_fraction));
    const double s = std::accumulate(w.begin(), w.end(), 0.0);
    if (!(s > 0)) return std::vector<double>(w.size(), 1.0 / static_cast<double>(w.size()));
    for (double& v : w) v /= s;
    return w;
}

// Fractions rounded as a recipe stores them, tiny ones set to zero, renormalised on the largest.
std::vector<double> tidy(std::vector<double> w) {
    for (double& v : w) v = v < kDropFraction ? 0.0 : round6(v);
    const auto big = std::max_element(w.begin(), w.end()) - w.begin();
    double others = 0;
    for (std::size_t i = 0; i < w.size(); ++i)
        if (static_cast<long>(i) != big) others += w[i];
    w[static_cast<std::size_t>(big)] = round6(1.0 - others);
    return w;
}

BlendInput blend_with(const FitProblem& p, const std::vector<double>& w) {
    BlendInput b = p.blend;
    b.components.clear();
    for (std::size_t i = 0; i < w.size(); ++i) {
        if (w[i] <= 0) continue;
        BlendComponent c = p.blend.components[i];
        c.mass_fraction = w[i];
        b.components.push_back(std::move(c));
    }
    return b;
}

// Closest point of segment ab to q (2-D).
UV closest_on_segment(const UV& a, const UV& b, const UV& q) {
    const double ex = b.u - a.u, ey = b.v - a.v, len2 = ex * ex + ey * ey;
    double t = len2 > 0 ? ((q.u - a.u) * ex + (q.v - a.v) * ey) / len2 : 0.0;
    t = std::clamp(t, 0.0, 1.0);
    return {a.u + t * ex, a.v + t * ey};
}

// Photon shares of three components that give chromaticity xy: rows sum_i s_i (X_i - x S_i) = 0,
// sum_i s_i (Y_i - y S_i) = 0, sum_i s_i = 1, with S = X + Y + Z (X, Y, Z linear in s).
std::optional<Eigen::Vector3d> shares_for(const FastBlend& fb, const Chromaticity& xy) {
    Eigen::Matrix3d m;
    for (int i = 0; i < 3; ++i) {
        const XYZ c = fb.component_xyz(static_cast<std::size_t>(i));
        const double s = c.X + c.Y + c.Z;
        m(0, i) = c.X - xy.x * s;
        m(1, i) = c.Y - xy.y * s;
        m(2, i) = 1.0;
    }
    const Eigen::FullPivLU<Eigen::Matrix3d> lu(m);
    if (lu.rank() < 3) return std::nullopt;
    return Eigen::Vector3d(lu.solve(Eigen::Vector3d(0, 0, 1)));
}

std::vector<double> mass_from_shares(const FastBlend& fb, const Eigen::Vector3d& s) {
    std::vector<double> w(3);
    double total = 0;
    for (std::size_t i = 0; i < 3; ++i) total += w[i] = std::max(0.0, s(static_cast<int>(i))) / fb.basis().share_weight[i];
    for (double& v : w) v /= total;
    return w;
}

struct Candidate {
    std::vector<double> w;
    bool feasible = false;
    double objective = 0;
    double violation = 0;
};

// The exact three-component solution; `nearest` set when the target lies outside the triangle.
struct ExactSolution {
    std::optional<std::vector<double>> w;  // within the limits
    std::string problem;
    std::optional<Chromaticity> nearest;
};

ExactSolution exact_three(const FitProblem& p, const FastBlend& fb, const Limits& lim) {
    ExactSolution out;
    const auto s = shares_for(fb, p.target.xy);
    if (!s) {
        out.problem = "the three components' chromaticities lie on one line, so they span no triangle";
        return out;
    }
    if (s->minCoeff() < 0) {
        std::array<UV, 3> v;
        for (std::size_t i = 0; i < 3; ++i) v[i] = uv_1976(fb.component_xyz(i));
        const UV q = uv_1976_from_xy(p.target.xy);
        UV best = v[0];
        double best_d = std::numeric_limits<double>::infinity();
        for (int e = 0; e < 3; ++e) {
            const UV c = closest_on_segment(v[static_cast<std::size_t>(e)], v[static_cast<std::size_t>((e + 1) % 3)], q);
            const double d = std::hypot(c.u - q.u, c.v - q.v);
            if (d < best_d) best_d = d, best = c;
        }
        out.nearest = xy_from_uv_1976(best);
        std::string names;
        for (int i = 0; i < 3; ++i)
            if ((*s)(i) < 0) names += (names.empty() ? "" : ", ") + p.blend.components[static_cast<std::size_t>(i)].label;
        out.problem = fmt::format("the target lies outside the triangle of the three components' chromaticities (it would need a "
                                  "negative amount of {}); the nearest reachable chromaticity is x = {:.4f}, y = {:.4f}, "
                                  "{:.4f} away in u'v'",
                                  names, out.nearest->x, out.nearest->y, best_d);
        return out;
    }
    const std::vector<double> w = mass_from_shares(fb, *s);
    for (std::size_t i = 0; i < 3; ++i)
        if (w[i] < lim.lo[i] - 1e-9 || w[i] > lim.hi[i] + 1e-9) {
            out.problem = fmt::format("the only blend of the three on the target has {:.4f} of {}, outside its limits {:g}-{:g}", w[i],
                                      p.blend.components[i].label, lim.lo[i], lim.hi[i]);
            return out;
        }
    out.w = w;
    return out;
}

// NLopt over z = all fractions but one (index `elim` takes 1 - sum z).
struct NloptContext {
    const FitProblem* p;
    const FastBlend* fb;
    const Limits* lim;
    std::size_t elim;
    std::vector<double> w0;
    int phase;  // 1: onto the target, 2: the objective under constraints
    std::vector<double> w;
    std::vector<double> cached_z;
    FastBlend::Eval cached;

    const std::vector<double>& fractions(const double* z) {
        std::size_t k = 0;
        double sum = 0;
        for (std::size_t i = 0; i < w.size(); ++i) {
            if (i == elim) continue;
            w[i] = std::max(0.0, z[k++]);
            sum += w[i];
        }
        w[elim] = std::max(0.0, 1.0 - sum);
        return w;
    }
    const FastBlend::Eval& eval(const double* z, unsigned n) {
        if (cached_z.size() == n && std::equal(cached_z.begin(), cached_z.end(), z)) return cached;
        cached_z.assign(z, z + n);
        const auto& ww = fractions(z);
        double total = 0;
        for (std::size_t i = 0; i < ww.size(); ++i) total += ww[i] * fb->basis().share_weight[i];
        if (total > 0) {
            cached = fb->evaluate(ww);
        } else {
            cached = {};
        }
        return cached;
    }
};

double nlopt_objective(unsigned n, const double* z, double*, void* data) {
    auto& c = *static_cast<NloptContext*>(data);
    const auto& e = c.eval(z, n);
    if (!(e.a.xyz.Y > 0)) return kPenalty;
    if (c.phase == 1) return chromaticity_ratio2(*c.p, e.a);
    return -search_objective(*c.p, e.a, e.efficacy, c.w, c.w0);
}

// The TM-30 constraints, g <= 0 when met (moved inwards by kIndexMargin): 0 Rf >=, 1 Rg >=,
// 2 Rg <=, 3 Rcs,h1 >=, 4 Rcs,h1 <=. Shared by the full-space and the on-target searches.
constexpr int kFidelityConstraints = 5;
bool fidelity_constraint_set(const FitProblem& p, int k) {
    switch (k) {
        case 0: return p.min_rf.has_value();
        case 1: return p.min_rg.has_value();
        case 2: return p.max_rg.has_value();
        case 3: return p.min_rcs_h1_percent.has_value();
        default: return p.max_rcs_h1_percent.has_value();
    }
}
double fidelity_constraint(const FitProblem& p, const Assessment& a, int k) {
    if (!a.fidelity) return kPenalty;
    const ColourFidelity& f = *a.fidelity;
    switch (k) {
        case 0: return (*p.min_rf + kIndexMargin) - f.rf;
        case 1: return (*p.min_rg + kIndexMargin) - f.rg;
        case 2: return f.rg - (*p.max_rg - kIndexMargin);
        case 3: return (*p.min_rcs_h1_percent + kIndexMargin) - f.rcs_h_percent[0];
        default: return f.rcs_h_percent[0] - (*p.max_rcs_h1_percent - kIndexMargin);
    }
}

struct IndexConstraint {
    NloptContext* c;
    int which;  // 0 chromaticity, 1 Ra, 2 R9, 3 LER, 4 elim >= lo, 5 elim <= hi, 6 + k TM-30 constraint k
};

double nlopt_constraint(unsigned n, const double* z, double*, void* data) {
    auto& ic = *static_cast<IndexConstraint*>(data);
    auto& c = *ic.c;
    if (ic.which == 4 || ic.which == 5) {
        double sum = 0;
        for (unsigned k = 0; k < n; ++k) sum += z[k];
        const double we = 1.0 - sum;
        return ic.which == 4 ? c.lim->lo[c.elim] - we : we - c.lim->hi[c.elim];
    }
    const auto& e = c.eval(z, n);
    if (!(e.a.xyz.Y > 0)) return kPenalty;
    const auto& p = *c.p;
    switch (ic.which) {
        case 0: return chromaticity_ratio2(p, e.a) - kChromaticityMargin * kChromaticityMargin;
        case 1: return e.a.rendering ? (*p.min_ra + kIndexMargin) - e.a.rendering->ra : kPenalty;
        case 2: return e.a.rendering ? (*p.min_r9 + kIndexMargin) - e.a.rendering->ri[8] : kPenalty;
        case 3: return (*p.min_ler + kIndexMargin) - e.a.ler_lm_per_W;
        default: return fidelity_constraint(p, e.a, ic.which - 6);
    }
}

// One start: onto the target, then the objective. Returns the fractions reached after each phase.
std::pair<std::vector<double>, std::vector<double>> run_start(const FitProblem& p, const FastBlend& fb, const Limits& lim,
                                                              const std::vector<double>& start, const FitOptions& opt,
                                                              bool skip_phase1 = false) {
    const std::size_t n = start.size();
    const std::size_t elim = static_cast<std::size_t>(std::max_element(start.begin(), start.end()) - start.begin());
    NloptContext ctx{&p, &fb, &lim, elim, normalised_start(p), 1, std::vector<double>(n), {}, {}};
    std::vector<double> z, lo, hi;
    for (std::size_t i = 0; i < n; ++i) {
        if (i == elim) continue;
        z.push_back(std::clamp(start[i], lim.lo[i], lim.hi[i]));
        lo.push_back(lim.lo[i]);
        hi.push_back(lim.hi[i]);
    }
    const auto m = static_cast<unsigned>(z.size());
    std::vector<double> after1, after2;
    if (m == 0) {
        after1 = after2 = std::vector<double>{1.0};
        return {after1, after2};
    }
    std::vector<IndexConstraint> cons;
    for (int k = 0; k < 6 + kFidelityConstraints; ++k) cons.push_back({&ctx, k});
    auto run = [&](int phase) {
        ctx.phase = phase;
        ctx.cached_z.clear();
        nlopt::opt o(nlopt::LN_COBYLA, m);
        o.set_lower_bounds(lo);
        o.set_upper_bounds(hi);
        o.add_inequality_constraint(nlopt_constraint, &cons[4], 1e-12);
        o.add_inequality_constraint(nlopt_constraint, &cons[5], 1e-12);
        if (phase == 1) {
            o.set_min_objective(nlopt_objective, &ctx);
            o.set_stopval(0.25 * kChromaticityMargin * kChromaticityMargin);  // within half the tolerance
        } else {
            o.set_min_objective(nlopt_objective, &ctx);
            o.add_inequality_constraint(nlopt_constraint, &cons[0], 1e-9);
            if (p.min_ra) o.add_inequality_constraint(nlopt_constraint, &cons[1], 1e-9);
            if (p.min_r9) o.add_inequality_constraint(nlopt_constraint, &cons[2], 1e-9);
            if (p.min_ler) o.add_inequality_constraint(nlopt_constraint, &cons[3], 1e-9);
            for (int k = 0; k < kFidelityConstraints; ++k)
                if (fidelity_constraint_set(p, k)) o.add_inequality_constraint(nlopt_constraint, &cons[static_cast<std::size_t>(6 + k)], 1e-9);
        }
        o.set_xtol_abs(1e-6);
        o.set_ftol_abs(1e-7);
        o.set_maxeval(opt.max_evaluations);
        std::vector<double> dx(m);
        for (unsigned k = 0; k < m; ++k) dx[k] = std::max(1e-4, std::min(0.05, 0.25 * (hi[k] - lo[k])));
        o.set_initial_step(dx);
        double f = 0;
        try {
            o.optimize(z, f);
        } catch (const nlopt::roundoff_limited&) {
        } catch (const nlopt::forced_stop&) {
        } catch (const std::invalid_argument&) {
        }
        return std::vector<double>(ctx.fractions(z.data()));
    };
    after1 = skip_phase1 ? start : run(1);
    after2 = run(2);
    return {after1, after2};
}

// Four or more components: the blends exactly on the target chromaticity form an affine set in
// the mass fractions, because the target's two chromaticity equations are linear and homogeneous
// in w: sum_i w_i a_i (X_i - x S_i) = 0, sum_i w_i a_i (Y_i - y S_i) = 0, with sum_i w_i = 1.
// w = w_p + N t with N an orthonormal basis of the null space; COBYLA then moves in t (n - 3
// dimensions) under the fraction limits, with the chromaticity met exactly.
struct OnTarget {
    Eigen::VectorXd wp;
    Eigen::MatrixXd basis;  // n x (n - 3)
};

std::optional<OnTarget> on_target_set(const FitProblem& p, const FastBlend& fb) {
    const auto n = static_cast<Eigen::Index>(fb.size());
    if (n < 4) return std::nullopt;
    Eigen::MatrixXd e(3, n);
    for (Eigen::Index i = 0; i < n; ++i) {
        const XYZ c = fb.component_xyz(static_cast<std::size_t>(i));
        const double a = fb.basis().share_weight[static_cast<std::size_t>(i)], sum = c.X + c.Y + c.Z;
        e(0, i) = a * (c.X - p.target.xy.x * sum);
        e(1, i) = a * (c.Y - p.target.xy.y * sum);
        e(2, i) = 1.0;
    }
    const Eigen::JacobiSVD<Eigen::MatrixXd> svd(e, Eigen::ComputeFullU | Eigen::ComputeFullV);
    if (svd.rank() < 3) return std::nullopt;
    OnTarget o;
    o.wp = svd.solve(Eigen::Vector3d(0, 0, 1));
    o.basis = svd.matrixV().rightCols(n - 3);
    return o;
}

struct OnTargetContext {
    const FitProblem* p;
    const FastBlend* fb;
    const Limits* lim;
    const OnTarget* set;
    std::vector<double> w0, w;
    const std::vector<double>& fractions(const double* t) {
        const auto n = set->wp.size(), m = set->basis.cols();
        const Eigen::VectorXd v = set->wp + set->basis * Eigen::Map<const Eigen::VectorXd>(t, m);
        for (Eigen::Index i = 0; i < n; ++i) w[static_cast<std::size_t>(i)] = v(i);
        return w;
    }
    std::optional<FastBlend::Eval> eval(const double* t) {
        const auto& ww = fractions(t);
        std::vector<double> clipped(ww.size());
        double total = 0;
        for (std::size_t i = 0; i < ww.size(); ++i) total += (clipped[i] = std::max(0.0, ww[i])) * fb->basis().share_weight[i];
        if (!(total > 0)) return std::nullopt;
        return fb->evaluate(clipped);
    }
};

double on_target_objective(unsigned, const double* t, double*, void* data) {
    auto& c = *static_cast<OnTargetContext*>(data);
    const auto e = c.eval(t);
    if (!e || !(e->a.xyz.Y > 0)) return kPenalty;
    return -objective_of(*c.p, e->a, e->efficacy, c.w, c.w0);
}

void on_target_limits(unsigned m, double* result, unsigned, const double* t, double*, void* data) {
    auto& c = *static_cast<OnTargetContext*>(data);
    const auto& w = c.fractions(t);
    const std::size_t n = w.size();
    for (std::size_t i = 0; i < n; ++i) {
        result[i] = c.lim->lo[i] - w[i];
        result[n + i] = w[i] - c.lim->hi[i];
    }
    (void)m;
}

double on_target_index(unsigned, const double* t, double*, void* data) {
    auto& ic = *static_cast<std::pair<OnTargetContext*, int>*>(data);
    const auto e = ic.first->eval(t);
    const auto& p = *ic.first->p;
    if (!e || !(e->a.xyz.Y > 0)) return kPenalty;
    if (ic.second == 1) return e->a.rendering ? (*p.min_ra + kIndexMargin) - e->a.rendering->ra : kPenalty;
    if (ic.second == 2) return e->a.rendering ? (*p.min_r9 + kIndexMargin) - e->a.rendering->ri[8] : kPenalty;
    if (ic.second == 3) return (*p.min_ler + kIndexMargin) - e->a.ler_lm_per_W;
    return fidelity_constraint(p, e->a, ic.second - 4);
}

std::vector<double> run_on_target(const FitProblem& p, const FastBlend& fb, const Limits& lim, const OnTarget& set,
                                  const std::vector<double>& start, const FitOptions& opt) {
    const auto n = set.wp.size();
    const auto m = static_cast<unsigned>(set.basis.cols());
    OnTargetContext ctx{&p, &fb, &lim, &set, normalised_start(p), std::vector<double>(static_cast<std::size_t>(n))};
    const Eigen::VectorXd t0 = set.basis.transpose() * (Eigen::Map<const Eigen::VectorXd>(start.data(), n) - set.wp);
    std::vector<double> t(t0.data(), t0.data() + m);
    nlopt::opt o(nlopt::LN_COBYLA, m);
    o.set_min_objective(on_target_objective, &ctx);
    o.add_inequality_mconstraint(on_target_limits, &ctx, std::vector<double>(2 * static_cast<std::size_t>(n), 1e-12));
    // 1 Ra, 2 R9, 3 LER, 4 + k TM-30 constraint k
    std::vector<std::pair<OnTargetContext*, int>> idx;
    for (int k = 1; k < 4 + kFidelityConstraints; ++k) idx.emplace_back(&ctx, k);
    if (p.min_ra) o.add_inequality_constraint(on_target_index, &idx[0], 1e-9);
    if (p.min_r9) o.add_inequality_constraint(on_target_index, &idx[1], 1e-9);
    if (p.min_ler) o.add_inequality_constraint(on_target_index, &idx[2], 1e-9);
    for (int k = 0; k < kFidelityConstraints; ++k)
        if (fidelity_constraint_set(p, k)) o.add_inequality_constraint(on_target_index, &idx[static_cast<std::size_t>(3 + k)], 1e-9);
    o.set_xtol_abs(1e-6);
    o.set_ftol_abs(1e-7);
    o.set_maxeval(opt.max_evaluations);
    o.set_initial_step(0.05);
    double f = 0;
    try {
        o.optimize(t, f);
    } catch (const nlopt::roundoff_limited&) {
    } catch (const nlopt::forced_stop&) {
    } catch (const std::invalid_argument&) {
    }
    std::vector<double> w = ctx.fractions(t.data());
    for (double& v : w) v = std::max(0.0, v);
    const double sum = std::accumulate(w.begin(), w.end(), 0.0);
    for (double& v : w) v /= sum;
    return w;
}

double total_violation(const std::vector<ConstraintReport>& cs) {
    double v = 0;
    for (const auto& c : cs)
        if (!c.satisfied) v += std::abs(c.value - c.limit) / std::max(1e-9, std::abs(c.limit));
    return v;
}

void finish(const FitProblem& p, FitResult& r, const std::vector<double>& w_raw) {
    r.mass_fractions = tidy(w_raw);
    r.blend = blend_with(p, r.mass_fractions);
    r.result = evaluate_blend(r.blend);
    r.constraints = check_constraints(p, r.mass_fractions, r.result);
    const Assessment& a = r.result.assessment;
    const UV t = uv_1976_from_xy(p.target.xy);
    r.distance_uv_prime = std::hypot(a.uv_prime.u - t.u, a.uv_prime.v - t.v);
    if (p.target.ellipse) r.macadam_steps = macadam_steps(*p.target.ellipse, a.xy);
    if (p.target.ansi_class) r.inside_ansi_quadrangle = inside_ansi_c78377(*p.target.ansi_class, a.xy);
    r.objective_value = objective_of(p, a, r.result.luminous_efficacy_absorbed, r.mass_fractions, normalised_start(p));
    if (p.objective == FitObjective::closest_to_start) r.objective_value = -r.objective_value;
    r.feasible = std::all_of(r.constraints.begin(), r.constraints.end(), [](const ConstraintReport& c) { return c.satisfied; });
}

}  // namespace

double objective_figure(FitObjective o, const ObjectiveWeights& k, const Assessment& a, double efficacy, double change) {
    switch (o) {
        case FitObjective::closest_to_start: return -change;
        case FitObjective::ler: return a.ler_lm_per_W;
        case FitObjective::efficacy: return efficacy;
        case FitObjective::rf: return a.fidelity ? a.fidelity->rf : -kPenalty;
        case FitObjective::rg: return a.fidelity ? a.fidelity->rg : -kPenalty;
        case FitObjective::rf_rg: return a.fidelity ? (1 - k.rg) * a.fidelity->rf + k.rg * a.fidelity->rg : -kPenalty;
        default: break;
    }
    if (!a.rendering) return -kPenalty;
    const double ra = a.rendering->ra, r9 = a.rendering->ri[8];
    if (o == FitObjective::ra) return ra;
    if (o == FitObjective::r9) return r9;
    return (1 - k.r9) * ra + k.r9 * r9;
}

double target_distance_ratio2(const Target& t, double tolerance_uv_prime, const Assessment& a) {
    if (t.ellipse) {
        const double st = macadam_steps(*t.ellipse, a.xy) / t.ellipse_steps;
        return st * st;
    }
    const UV c = uv_1976_from_xy(t.xy);
    const double du = a.uv_prime.u - c.u, dv = a.uv_prime.v - c.v;
    return (du * du + dv * dv) / (tolerance_uv_prime * tolerance_uv_prime);
}

FitObjective parse_fit_objective(const std::string& name) {
    if (name == "change") return FitObjective::closest_to_start;
    if (name == "ra") return FitObjective::ra;
    if (name == "r9") return FitObjective::r9;
    if (name == "ra-r9") return FitObjective::ra_r9;
    if (name == "ler") return FitObjective::ler;
    if (name == "efficacy") return FitObjective::efficacy;
    if (name == "rf") return FitObjective::rf;
    if (name == "rg") return FitObjective::rg;
    if (name == "rf-rg") return FitObjective::rf_rg;
    throw Error(fmt::format("unknown objective '{}': use ra, r9, ra-r9, ler, efficacy, rf, rg, rf-rg or change", name));
}

std::string fit_objective_name(FitObjective o) {
    switch (o) {
        case FitObjective::closest_to_start: return "smallest change from the starting recipe (sum |dw|)";
        case FitObjective::ra: return "maximum Ra";
        case FitObjective::r9: return "maximum R9";
        case FitObjective::ra_r9: return "maximum weighted Ra/R9";
        case FitObjective::ler: return "maximum LER";
        case FitObjective::efficacy: return "maximum efficacy per W absorbed";
        case FitObjective::rf: return "maximum Rf (CIE 224)";
        case FitObjective::rg: return "maximum Rg (TM-30-20)";
        case FitObjective::rf_rg: return "maximum weighted Rf/Rg";
    }
    return "";
}

std::vector<ConstraintReport> check_constraints(const FitProblem& p, const std::vector<double>& w, const BlendResult& res) {
    std::vector<ConstraintReport> out;
    const Limits lim = limits_of(p);
    const Assessment& a = res.assessment;
    // `rounding`: how far a value computed at its limit may fall past it (0: exact comparisons).
    auto upper = [&](std::string name, double value, double limit, double active_margin, std::string text, double rounding = 0) {
        const bool ok = value <= limit + rounding;
        out.push_back({std::move(name), value, limit, ok, value > limit - active_margin && ok, std::move(text)});
    };
    auto lower = [&](std::string name, double value, double limit, double active_margin, std::string text, double rounding = 0) {
        const bool ok = value >= limit - rounding;
        out.push_back({std::move(name), value, limit, ok, value < limit + active_margin && ok, std::move(text)});
    };
    if (p.target.ellipse) {
        const double st = macadam_steps(*p.target.ellipse, a.xy);
        upper("MacAdam steps <=", st, p.target.ellipse_steps, 0.02 * p.target.ellipse_steps,
              fmt::format("{:.2f} MacAdam steps from the centre, limit {:g}", st, p.target.ellipse_steps));
    } else {
        const UV t = uv_1976_from_xy(p.target.xy);
        const double d = std::hypot(a.uv_prime.u - t.u, a.uv_prime.v - t.v);
        upper("delta u'v' <=", d, p.tolerance_uv_prime, 0.02 * p.tolerance_uv_prime,
              fmt::format("delta u'v' from the target {:.5f}, limit {:g}", d, p.tolerance_uv_prime));
    }
    const double ra = a.rendering ? a.rendering->ra : -kPenalty, r9 = a.rendering ? a.rendering->ri[8] : -kPenalty;
    if (p.min_ra) lower("Ra >=", ra, *p.min_ra, 0.05, fmt::format("Ra {:.2f}, limit {:g}", ra, *p.min_ra));
    if (p.min_r9) lower("R9 >=", r9, *p.min_r9, 0.05, fmt::format("R9 {:.2f}, limit {:g}", r9, *p.min_r9));
    if (p.min_ler) lower("LER >=", a.ler_lm_per_W, *p.min_ler, 0.05, fmt::format("LER {:.2f} lm/W, limit {:g}", a.ler_lm_per_W, *p.min_ler));
    if (p.min_rf) {
        const double rf = a.fidelity ? a.fidelity->rf : -kPenalty;
        lower("Rf >=", rf, *p.min_rf, 0.05, fmt::format("Rf {:.2f}, limit {:g}", rf, *p.min_rf));
    }
    const double rg = a.fidelity ? a.fidelity->rg : -kPenalty, rcs1 = a.fidelity ? a.fidelity->rcs_h_percent[0] : -kPenalty;
    if (p.min_rg) lower("Rg >=", rg, *p.min_rg, 0.05, fmt::format("Rg {:.2f}, limit {:g}", rg, *p.min_rg));
    if (p.max_rg) upper("Rg <=", a.fidelity ? rg : kPenalty, *p.max_rg, 0.05, fmt::format("Rg {:.2f}, limit {:g}", rg, *p.max_rg));
    if (p.min_rcs_h1_percent)
        lower("Rcs,h1 >=", rcs1, *p.min_rcs_h1_percent, 0.05, fmt::format("Rcs,h1 {:.2f} %, limit {:g} %", rcs1, *p.min_rcs_h1_percent));
    if (p.max_rcs_h1_percent)
        upper("Rcs,h1 <=", a.fidelity ? rcs1 : kPenalty, *p.max_rcs_h1_percent, 0.05,
              fmt::format("Rcs,h1 {:.2f} %, limit {:g} %", rcs1, *p.max_rcs_h1_percent));
    for (std::size_t i = 0; i < w.size(); ++i) {
        const auto& label = p.blend.components[i].label;
        // A fraction held at its limit (min = max: a fixed component) is rounded to 6 decimals in the
        // result (tidy), so it may land up to half a unit of the 6th decimal past the limit.
        lower("fraction >=", w[i], lim.lo[i], kActiveFraction, fmt::format("{}: fraction {:.6f}, minimum {:g}", label, w[i], lim.lo[i]),
              kFractionRounding);
        upper("fraction <=", w[i], lim.hi[i], kActiveFraction, fmt::format("{}: fraction {:.6f}, maximum {:g}", label, w[i], lim.hi[i]),
              kFractionRounding);
    }
    return out;
}

namespace {
// The progress callback between starts: a stop request ends the fit here, never mid-start.
void ask_to_go_on(const FitOptions& opt, std::size_t done, std::size_t total) {
    if (opt.progress && !opt.progress(static_cast<int>(done), static_cast<int>(total))) throw FitCancelled();
}
}  // namespace

FitResult solve(const FitProblem& p, const FitOptions& opt) {
    const std::size_t n = p.blend.components.size();
    if (n == 0) throw Error(fmt::format("blend '{}' has no components", p.blend.name));
    if (p.target.ellipse && !(p.target.ellipse_steps > 0)) throw Error("the target's ellipse needs a positive number of steps");
    if (!p.target.ellipse && !(p.tolerance_uv_prime > 0)) throw Error("the chromaticity tolerance must be positive");
    const Limits lim = limits_of(p);
    if (p.min_rg && p.max_rg && *p.min_rg > *p.max_rg) throw Error(fmt::format("the Rg range is empty: minimum {:g} above maximum {:g}", *p.min_rg, *p.max_rg));
    if (p.min_rcs_h1_percent && p.max_rcs_h1_percent && *p.min_rcs_h1_percent > *p.max_rcs_h1_percent)
        throw Error(fmt::format("the Rcs,h1 range is empty: {:g} % above {:g} %", *p.min_rcs_h1_percent, *p.max_rcs_h1_percent));
    const FastBlend fb(p.blend, p.needs_fidelity());
    FitResult r;

    std::vector<std::vector<double>> starts;
    std::optional<ExactSolution> exact_failed;  // the exact solve's answer when it has no blend within the limits
    if (n == 3 && opt.method != FitMethod::nlopt) {
        const ExactSolution ex = exact_three(p, fb, lim);
        // The unique blend on the target is the answer when the objective is the smallest change
        // (nothing to trade) or when asked for the exact solve alone.
        if (ex.w && (opt.method == FitMethod::exact || p.objective == FitObjective::closest_to_start)) {
            r.method = "exact 3x3";
            finish(p, r, *ex.w);
            r.evaluations = fb.evaluations;
            r.message = r.feasible ? "exact solution on the target" : "the exact solution breaks a constraint (see the list)";
            return r;
        }
        if (ex.w) {
            starts.push_back(*ex.w);
            r.method = "exact 3x3 + NLopt COBYLA";
        } else {
            // No blend exactly on the target within the limits (or inside the triangle): a blend
            // within the tolerance may still exist, e.g. along a fraction limit. Search for it
            // with NLopt rather than declaring the target infeasible.
            exact_failed = ex;
            r.method = "exact 3x3 (no on-target blend within the limits) + NLopt COBYLA";
        }
    } else {
        r.method = "NLopt COBYLA";
    }
    if (opt.method == FitMethod::exact && n != 3) throw Error(fmt::format("the exact solve needs exactly three components, not {}", n));

    // Deterministic starts: the recipe, the equal split, then each component leading.
    starts.push_back(normalised_start(p));
    starts.push_back(std::vector<double>(n, 1.0 / static_cast<double>(n)));
    for (std::size_t k = 0; k < n && n > 1; ++k) {
        std::vector<double> s(n, 0.5 / static_cast<double>(n - 1));
        s[k] = 0.5;
        starts.push_back(s);
    }

    std::optional<Candidate> best;
    std::optional<Candidate> least_bad;
    std::vector<double> nearest_w;
    double nearest_d = std::numeric_limits<double>::infinity();
    auto consider = [&](const std::vector<double>& w) {
        Candidate c{tidy(w)};
        double total = 0;
        for (std::size_t i = 0; i < n; ++i) total += c.w[i] * fb.basis().share_weight[i];
        if (!(total > 0)) return;
        const auto e = fb.evaluate(c.w);
        // A cheap check with the fast path; the winner is re-checked with evaluate_blend.
        BlendResult fake;
        fake.assessment = e.a;
        fake.luminous_efficacy_absorbed = e.efficacy;
        const auto cs = check_constraints(p, c.w, fake);
        c.violation = total_violation(cs);
        c.feasible = c.violation == 0;
        c.objective = search_objective(p, e.a, e.efficacy, c.w, normalised_start(p));
        if (c.feasible && (!best || c.objective > best->objective + 1e-12)) best = c;
        if (!least_bad || c.violation < least_bad->violation) least_bad = c;
    };
    // Four or more components: search the blends exactly on the target first, then polish the
    // best within the tolerance.
    if (const auto set = on_target_set(p, fb); set && opt.method != FitMethod::exact) {
        r.method = "NLopt COBYLA (on the target, then within the tolerance)";
        for (std::size_t k = 0; k < starts.size(); ++k) {
            ask_to_go_on(opt, k, starts.size());
            consider(run_on_target(p, fb, lim, *set, starts[k], opt));
            ++r.starts;
        }
        if (best && p.objective != FitObjective::closest_to_start) {  // the default stays on the target centre
            FitOptions polish = opt;
            polish.max_evaluations = std::max(100, opt.max_evaluations / 4);
            consider(run_start(p, fb, lim, best->w, polish, true).second);
        }
    }
    // Otherwise (and when nothing on the target meets the limits): onto the target from each start,
    // then the objective within the tolerance.
    if (!best) {
        for (std::size_t k = 0; k < starts.size(); ++k) {
            ask_to_go_on(opt, k, starts.size());
            const auto [w1, w2] = run_start(p, fb, lim, starts[k], opt);
            ++r.starts;
            const auto e = fb.evaluate(w1);
            const double d = chromaticity_ratio2(p, e.a);
            if (d < nearest_d) nearest_d = d, nearest_w = w1;
            consider(w2);
            consider(w1);
        }
    }
    if (best) {
        finish(p, r, best->w);
        r.message = r.feasible ? fmt::format("feasible; {} over {} starts", fit_objective_name(p.objective), r.starts)
                               : "the best blend found fails the re-check with evaluate_blend (see the list)";
    } else {
        if (exact_failed) {
            // The exact solve explains why better than the search: report its nearest blend.
            r.nearest_reachable = exact_failed->nearest;
            std::vector<double> w = least_bad ? least_bad->w : normalised_start(p);
            if (exact_failed->nearest)
                if (const auto s = shares_for(fb, *exact_failed->nearest)) w = mass_from_shares(fb, *s);
            finish(p, r, w);
            r.feasible = false;
            r.message = "no feasible blend: " + exact_failed->problem;
            r.evaluations = fb.evaluations;
            return r;
        }
        finish(p, r, least_bad ? least_bad->w : normalised_start(p));
        r.feasible = false;
        if (!nearest_w.empty()) {
            const auto e = fb.evaluate(nearest_w);
            r.nearest_reachable = e.a.xy;
        }
        std::string failing;
        for (const auto& c : r.constraints)
            if (!c.satisfied) failing += (failing.empty() ? "" : "; ") + c.text;
        r.message = fmt::format("no feasible blend found from {} starts; the least-bad one fails: {}", r.starts, failing);
        if (r.nearest_reachable && nearest_d > 1)
            r.message += fmt::format(" (the closest the components reach is x = {:.4f}, y = {:.4f})", r.nearest_reachable->x,
                                     r.nearest_reachable->y);
    }
    r.evaluations = fb.evaluations;
    return r;
}

std::vector<SensitivityRow> fraction_sensitivity(const BlendInput& blend, double step) {
    if (!(step > 0 && step < 0.5)) throw Error(fmt::format("sensitivity step must lie in (0, 0.5), not {:g}", step));
    const FastBlend fb(blend);
    FitProblem p;
    p.blend = blend;
    const std::vector<double> w = normalised_start(p);
    auto at = [&](std::size_t i, double dw) {
        std::vector<double> v = w;
        v[i] += dw;
        const double sum = std::accumulate(v.begin(), v.end(), 0.0);
        for (double& x : v) x /= sum;
        return fb.evaluate(v).a;
    };
    std::vector<SensitivityRow> rows;
    for (std::size_t i = 0; i < w.size(); ++i) {
        // Central difference where the fraction allows it, forward otherwise.
        const double lo = std::min(step / 2, w[i]), hi = step / 2;
        const Assessment a = at(i, -lo), b = at(i, hi);
        const double scale = step / (lo + hi);
        SensitivityRow r;
        r.label = blend.components[i].label;
        r.mass_fraction = w[i];
        r.d_u_prime = (b.uv_prime.u - a.uv_prime.u) * scale;
        r.d_v_prime = (b.uv_prime.v - a.uv_prime.v) * scale;
        r.d_cct_K = a.cct.valid && b.cct.valid ? (b.cct.cct_K - a.cct.cct_K) * scale : std::nan("");
        r.d_duv = (b.cct.duv - a.cct.duv) * scale;
        r.d_ra = a.rendering && b.rendering ? (b.rendering->ra - a.rendering->ra) * scale : std::nan("");
        rows.push_back(r);
    }
    return rows;
}

}  // namespace lampwright
