#include "lampwright/report/fit_report.hpp"

#include "lampwright/core/format.hpp"
#include "lampwright/report/blend_report.hpp"
#include "lampwright/report/layer_report.hpp"
#include "lampwright/report/svg_plot.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <sstream>
#include <tuple>

namespace lampwright {

namespace {

std::string fmt_opt(const std::optional<double>& v, int decimals) { return v ? format_fixed(*v, decimals, "n/a") : "n/a"; }

std::string sigma_words(const std::vector<double>& v, double scale, const char* unit) {
    std::string s;
    for (double x : v) s += fmt::format("{}{:g}{}", s.empty() ? "" : ", ", x * scale, unit);
    return v.size() > 1 ? "(" + s + ")" : s;
}

}  // namespace

std::string fit_chromaticity_aim(const FitProblem& p) {
    if (p.objective == FitObjective::closest_to_start) return "aimed at the target centre";
    const std::string limit = p.target.ellipse ? fmt::format("{:g} MacAdam steps", p.target.ellipse_steps)
                                               : fmt::format("delta u'v' <= {:g}", p.tolerance_uv_prime);
    return fmt::format("held within {} while maximising {}", limit, fit_objective_name(p.objective).substr(8));
}

std::string fit_text(const FitProblem& p, const FitResult& r, double ms) {
    std::ostringstream o;
    const Assessment& a = r.result.assessment;
    o << fmt::format("Fit of '{}'\n", p.blend.name);
    o << fmt::format("  target:     {}", p.target.description);
    if (p.target.kind != Target::Kind::chromaticity) o << fmt::format(" (x = {:.4f}, y = {:.4f})", p.target.xy.x, p.target.xy.y);
    o << '\n';
    o << fmt::format("  objective:  {}\n", fit_objective_name(p.objective));
    o << fmt::format("  chromaticity: {}\n", fit_chromaticity_aim(p));
    o << fmt::format("  method:     {}, {} evaluations, {:.1f} ms\n", r.method, r.evaluations, ms);
    o << fmt::format("  result:     {}{}\n", r.feasible ? "" : "NOT FEASIBLE - ", r.message);
    // Header and rows from the same widths (the name column as wide as the longest label).
    std::size_t name_w = 40;
    for (const auto& c : p.blend.components) name_w = std::max(name_w, c.label.size());
    o << fmt::format("\n  {:<{}}  {:>6}   {:>8}\n", "component", name_w, "start", "fitted");
    for (std::size_t i = 0; i < p.blend.components.size(); ++i) {
        double total = 0;
        for (const auto& c : p.blend.components) total += c.mass_fraction;
        o << fmt::format("  {:<{}}  {:>6.4f}   {:>8.6f}\n", p.blend.components[i].label, name_w, p.blend.components[i].mass_fraction / total,
                         r.mass_fractions[i]);
    }
    o << fmt::format("\n  x, y        {:.4f}, {:.4f}   u'v' {:.4f}, {:.4f}   delta u'v' from target {:.5f}\n", a.xy.x, a.xy.y,
                     a.uv_prime.u, a.uv_prime.v, r.distance_uv_prime);
    if (r.macadam_steps) o << fmt::format("  MacAdam     {:.2f} steps from the centre\n", *r.macadam_steps);
    if (r.inside_ansi_quadrangle) o << fmt::format("  ANSI C78.377 quadrangle: {}\n", *r.inside_ansi_quadrangle ? "inside" : "OUTSIDE");
    // "none" alone when there is no CCT (never "n/a K").
    o << fmt::format("  CCT, Duv    {}, {}\n", a.cct.valid ? format_fixed(a.cct.cct_K, 0) + " K" : "none", format_signed(a.cct.duv, 4));
    std::optional<double> ra, r9;
    if (a.rendering) ra = a.rendering->ra, r9 = a.rendering->ri[8];
    o << fmt::format("  Ra, R9      {}, {}\n", fmt_opt(ra, 1), fmt_opt(r9, 1));
    std::optional<double> rf, rg;
    if (a.fidelity) rf = a.fidelity->rf, rg = a.fidelity->rg;
    o << fmt::format("  Rf, Rg      {}, {}   (CIE 224, TM-30-20)\n", fmt_opt(rf, 1), fmt_opt(rg, 1));
    o << fmt::format("  LER         {:.1f} lm/W;  efficacy {:.1f} lm per W absorbed\n", a.ler_lm_per_W, r.result.luminous_efficacy_absorbed);
    if (!r.result.components.empty()) o << blend_assumptions_text(r.result, r.blend);
    if (r.nearest_reachable)
        o << fmt::format("  nearest reachable chromaticity: x = {:.4f}, y = {:.4f}\n", r.nearest_reachable->x, r.nearest_reachable->y);
    o << "\n  constraints (re-checked with the blend model):\n";
    for (const auto& c : r.constraints)
        o << fmt::format("    {:<6} {}{}\n", c.satisfied ? "ok" : "BROKEN", c.text, c.active ? "  [active]" : "");
    return o.str();
}

nlohmann::ordered_json fit_json(const FitProblem& p, const FitResult& r, double ms) {
    nlohmann::ordered_json j;
    j["feasible"] = r.feasible;
    j["message"] = r.message;
    j["method"] = r.method;
    j["objective"] = fit_objective_name(p.objective);
    j["objective_value"] = r.objective_value;
    j["target"] = {{"description", p.target.description}, {"x", p.target.xy.x}, {"y", p.target.xy.y}};
    j["delta_uv_prime"] = r.distance_uv_prime;
    if (r.macadam_steps) j["macadam_steps"] = *r.macadam_steps;
    if (r.inside_ansi_quadrangle) j["inside_ansi_quadrangle"] = *r.inside_ansi_quadrangle;
    if (r.nearest_reachable) j["nearest_reachable"] = {{"x", r.nearest_reachable->x}, {"y", r.nearest_reachable->y}};
    auto& f = j["fitted_fractions"] = nlohmann::ordered_json::array();
    for (std::size_t i = 0; i < p.blend.components.size(); ++i)
        f.push_back({{"id", p.blend.components[i].label}, {"mass_fraction", r.mass_fractions[i]}});
    auto& cs = j["constraints"] = nlohmann::ordered_json::array();
    for (const auto& c : r.constraints)
        cs.push_back({{"name", c.name}, {"value", c.value}, {"limit", c.limit}, {"satisfied", c.satisfied}, {"active", c.active}, {"text", c.text}});
    j["evaluations"] = r.evaluations;
    j["time_ms"] = ms;
    j["warnings"] = r.result.assessment.warnings;
    j["blend"] = blend_json(r.result, r.blend);
    return j;
}

std::string front_text(const FitProblem& p, const TradeoffFront& f, double ms) {
    std::ostringstream o;
    o << fmt::format("Trade-off front of '{}': maximum {} for a rising floor on {}\n", p.blend.name, f.objective_label, f.floor_label);
    o << fmt::format("  target:     {}", p.target.description);
    if (p.target.kind != Target::Kind::chromaticity) o << fmt::format(" (x = {:.4f}, y = {:.4f})", p.target.xy.x, p.target.xy.y);
    o << '\n';
    o << fmt::format("  sweep:      {}; {} evaluations, {:.0f} ms\n", f.message, f.evaluations, ms);
    o << fmt::format("\n  {:>8} {:>9} {:>7} {:>7} {:>6} {:>6} {:>7} {:>9}  fractions ({})\n", "min " + f.floor_label, f.objective_label, "Ra", "R9",
                     "Rf", "Rg", "LER", "efficacy", [&] {
                         std::string l;
                         for (const auto& c : p.blend.components) l += (l.empty() ? "" : ", ") + c.label;
                         return l;
                     }());
    for (const auto& pt : f.points) {
        if (!pt.feasible) {
            o << fmt::format("  {:8.2f}  no feasible blend\n", pt.floor);
            continue;
        }
        std::string fr;
        for (double w : pt.mass_fractions) fr += fmt::format("{}{:.4f}", fr.empty() ? "" : " ", w);
        o << fmt::format("  {:>8} {:>9} {:>7} {:>7} {:>6} {:>6} {:>7} {:>9}  {}{}\n", format_fixed(pt.floor, 2), format_fixed(pt.objective, 2), format_fixed(pt.ra, 2),
                         format_fixed(pt.r9, 2), format_fixed(pt.rf, 1, "-"), format_fixed(pt.rg, 1, "-"), format_fixed(pt.ler, 1),
                         format_fixed(pt.efficacy, 2), fr,
                         pt.from_other_point ? "  *" : "");
    }
    if (std::any_of(f.points.begin(), f.points.end(), [](const FrontPoint& q) { return q.from_other_point; }))
        o << "  * the blend of another point's solve: it meets this floor and beats this point's own answer\n";
    o << fmt::format("  (LER in lm/W of light; efficacy in lm per W of absorbed excitation)\n");
    return o.str();
}

nlohmann::ordered_json front_json(const FitProblem& p, const TradeoffFront& f, double ms) {
    nlohmann::ordered_json j;
    j["front"] = front_kind_name(f.kind);
    j["maximised"] = f.objective_label;
    j["floor_on"] = f.floor_label;
    j["floor_low"] = f.floor_low;
    j["floor_high"] = f.floor_high;
    j["target"] = {{"description", p.target.description}, {"x", p.target.xy.x}, {"y", p.target.xy.y}};
    j["message"] = f.message;
    j["solves"] = f.solves;
    j["evaluations"] = f.evaluations;
    j["time_ms"] = ms;
    j["warnings"] = nlohmann::ordered_json::array();  // none yet; there for a stable schema (docs/output-schemas.md)
    auto& pts = j["points"] = nlohmann::ordered_json::array();
    for (const auto& pt : f.points) {
        nlohmann::ordered_json q;
        q["floor"] = pt.floor;
        q["feasible"] = pt.feasible;
        if (pt.feasible) {
            q["objective"] = pt.objective;
            q["Ra"] = pt.ra;
            q["R9"] = pt.r9;
            q["ler_lm_per_W"] = pt.ler;
            q["efficacy_lm_per_W_absorbed"] = pt.efficacy;
            q["Rf"] = number_or_null(pt.rf);
            q["Rg"] = number_or_null(pt.rg);
            q["x"] = pt.xy.x;
            q["y"] = pt.xy.y;
            q["delta_uv_prime"] = pt.distance_uv_prime;
            q["from_other_point"] = pt.from_other_point;
            auto& fr = q["fractions"] = nlohmann::ordered_json::array();
            for (std::size_t i = 0; i < pt.mass_fractions.size(); ++i)
                fr.push_back({{"id", p.blend.components[i].label}, {"mass_fraction", pt.mass_fractions[i]}});
        }
        pts.push_back(q);
    }
    return j;
}

std::string subsets_text(const SubsetTrials& c, std::size_t n) {
    std::ostringstream o;
    o << fmt::format("Best {} of {} components: {} subsets tried\n", c.k, n, c.trials.size());
    for (std::size_t i = 0; i < c.trials.size(); ++i) {
        const auto& t = c.trials[i];
        if (t.feasible)
            o << fmt::format("  {} {:<60} objective {:.4f}\n", c.found && i == c.best ? "best" : "  ok", t.labels, t.objective_value);
        else
            o << fmt::format("  INFEASIBLE {:<54} {}\n", t.labels, t.message);
    }
    return o.str() + "\n";
}

std::string tolerance_text(const ToleranceProblem& t, const ToleranceResult& r, double ms, const std::string& ellipse_source) {
    std::ostringstream o;
    o << fmt::format("\nProduction tolerance of '{}' (Monte Carlo: {} draws, seed {}, {:.0f} ms)\n", t.blend.name, r.draws, r.seed, ms);
    o << fmt::format("  variation:  lamps made in batches of {} (the per-batch terms are shared by a batch's lamps)\n", t.batch_size);
    auto origin = [&](const char* key) {
        for (const auto& [k, w] : t.origins)
            if (k == key) return "  [" + w + "]";
        return std::string();
    };
    const std::string w_unit = t.weighing_relative ? " % of each component's mass" : " (absolute, in mass fraction)";
    const std::vector<std::tuple<const char*, const char*, std::string>> rows{
        {"weighing_sigma", "weighing of the mix", sigma_words(t.weighing_sigma, t.weighing_relative ? 100 : 1, "") + w_unit},
        {"d50_sigma", "lot d50", sigma_words(t.d50_sigma, 100, " %")},
        {"absorption_sigma", "lot absorption", sigma_words(t.absorption_sigma, 100, " %")},
        {"qe_sigma", "lot brightness (QE)", sigma_words(t.qe_sigma, 100, " %")},
        {"peak_sigma_nm", "lot peak shift", sigma_words(t.peak_sigma_nm, 1, " nm") + " (band emitters; line emitters never shift)"},
        {"coating_weight_sigma_mg_per_cm2", "coating weight", fmt::format("{:g} mg/cm2", t.coating_weight_sigma_mg_per_cm2)},
        {"measurement_sigma_xy", "measurement", fmt::format("{:g} in x and y", t.measurement_sigma_xy)},
        {"batch_size", "batch size", fmt::format("{} lamps", t.batch_size)}};
    for (const auto& [key, name, value] : rows)
        o << fmt::format("    {:<20} {:<6} {}{}{}\n", name, tolerance_source(key).level, std::string(key) == "batch_size" ? "" : "sigma ", value,
                         origin(key));
    o << fmt::format("  ellipse:    {}\n              centre (target) x = {:.4f}, y = {:.4f}; one-step semi-axes {:.5f}, {:.5f} at {:.1f} deg\n",
                     ellipse_source, r.target.x, r.target.y, t.ellipse.a, t.ellipse.b, t.ellipse.theta_deg);
    o << fmt::format("  nominal:    x = {:.4f}, y = {:.4f}, {:.2f} steps from the target\n", r.nominal_xy.x, r.nominal_xy.y, r.nominal_steps);
    o << fmt::format("  lamps:      x {:.4f} (sd {:.4f}), y {:.4f} (sd {:.4f}), correlation {}\n", r.mean_x, r.sd_x, r.mean_y, r.sd_y,
                     format_signed(r.corr_xy, 2));
    o << fmt::format("  MacAdam steps from the target: mean {:.2f}, sd {:.2f}; median {:.2f}, 90 % {:.2f}, 95 % {:.2f}, 99 % {:.2f}, max {:.2f}\n",
                     r.mean_steps, r.sd_steps, r.p50, r.p90, r.p95, r.p99, r.max_steps);
    o << fmt::format("  inside the {:g}-step ellipse: {:.2f} % of lamps (standard error {:.2f} %, {} of {})\n", r.steps_limit, 100 * r.yield,
                     100 * r.yield_standard_error, r.inside, r.draws);
    o << fmt::format("  batches:    {} of {} lamps; sd of x within a batch {:.4f}, between batch means {:.4f}; of y {:.4f}, {:.4f}\n",
                     r.batches, r.batch_size, r.sd_x_within, r.sd_x_between, r.sd_y_within, r.sd_y_between);
    o << fmt::format("              RMS MacAdam steps: lamp from its batch mean {:.2f}, batch mean from the mean of the batch means {:.2f}; "
                     "worst batch mean {:.2f} steps from the target\n",
                     r.within_steps_rms, r.between_steps_rms, r.worst_batch_mean_steps);
    if (r.fidelity_draws > 0)
        o << fmt::format("  Rf, Rg:     Rf mean {:.1f} (sd {:.2f}; 5 % {:.1f}, 95 % {:.1f}), Rg mean {:.1f} (sd {:.2f}; 5 % {:.1f}, 95 % {:.1f}); "
                         "nominal Rf {}, Rg {}\n              (CIE 224, TM-30-20; over the first {} draws; the measurement error not in them)\n",
                         r.rf.mean, r.rf.sd, r.rf.p05, r.rf.p95, r.rg.mean, r.rg.sd, r.rg.p05, r.rg.p95, format_fixed(r.nominal_rf, 1, "-"),
                         format_fixed(r.nominal_rg, 1, "-"), r.fidelity_draws);
    for (const auto& n : r.notes) o << "  note:       " << n << '\n';
    if (r.failed > 0)
        o << fmt::format("  failed:     {} draws gave no light (every QE drawn at zero): counted outside, left out of the figures above\n", r.failed);
    return o.str();
}

std::string front_csv(const FitProblem& problem, const TradeoffFront& f) {
    std::vector<std::string> cols{fmt::format("min_{}", f.floor_label), "feasible", f.objective_label == "Ra" ? "objective_Ra" : "objective_" + f.objective_label,
                                  "Ra", "R9", "ler_lm_per_W", "efficacy_lm_per_W_absorbed", "x", "y", "delta_uv_prime", "from_other_point", "Rf", "Rg"};
    for (const auto& c : problem.blend.components) cols.push_back("fraction_" + c.label);
    std::string out = csv_line(cols) + "\n";
    for (const auto& p : f.points) {
        std::vector<std::string> v{fmt::format("{:.3f}", p.floor), p.feasible ? "true" : "false"};
        if (p.feasible) {
            for (double x : {p.objective, p.ra, p.r9, p.ler, p.efficacy}) v.push_back(fmt::format("{:.4f}", x));
            v.push_back(fmt::format("{:.5f}", p.xy.x));
            v.push_back(fmt::format("{:.5f}", p.xy.y));
            v.push_back(fmt::format("{:.6f}", p.distance_uv_prime));
            v.push_back(p.from_other_point ? "true" : "false");
            v.push_back(format_fixed(p.rf, 4, ""));
            v.push_back(format_fixed(p.rg, 4, ""));
            for (double w : p.mass_fractions) v.push_back(fmt::format("{:.6f}", w));
        } else {
            for (std::size_t i = 2; i < cols.size(); ++i) v.push_back("");
        }
        out += csv_line(v) + "\n";
    }
    return out;
}

std::string front_svg(const FitProblem& problem, const TradeoffFront& f) {
    SvgSeries line{"front", {}, {}, series_colour(0), false};
    for (const auto& p : f.points) {
        if (!p.feasible) continue;
        line.x.push_back(f.kind == FrontKind::ra_r9 ? p.r9 : f.kind == FrontKind::rf_efficacy ? p.rf : p.ra);
        line.y.push_back(p.objective);
    }
    SvgSeries dots = line;
    dots.label = "solved points";
    dots.points = true;
    SvgAxes ax;
    ax.title = fmt::format("{}: {} against {} ({})", problem.blend.name, f.objective_label, f.floor_label, problem.target.description);
    ax.x_label = f.floor_label + (f.kind == FrontKind::rf_efficacy ? " (CIE 224)" : " (CIE 13.3)");
    ax.y_label = f.objective_label + (f.objective_unit.empty() ? "" : " (" + f.objective_unit + ")");
    if (line.x.empty()) {
        ax.x_min = 0, ax.x_max = 100, ax.y_min = 0, ax.y_max = 1;
    } else {
        const auto [x0, x1] = std::minmax_element(line.x.begin(), line.x.end());
        const auto [y0, y1] = std::minmax_element(line.y.begin(), line.y.end());
        const double px = std::max(0.5, 0.05 * (*x1 - *x0)), py = std::max(0.5, 0.05 * (*y1 - *y0));
        ax.x_min = std::floor(*x0 - px), ax.x_max = std::ceil(*x1 + px);
        ax.y_min = std::floor(*y0 - py), ax.y_max = std::ceil(*y1 + py);
    }
    return svg_chart(ax, {line, dots});
}

std::pair<std::vector<std::string>, std::vector<std::string>> fit_csv(const FitProblem& p, const FitResult& r, const ToleranceResult* tr,
                                                                      bool tolerance_run) {
    // The same columns whatever the answer: the fitted blend leaves out components at zero (and an
    // infeasible fit may have none at all), so the component columns follow the recipe, one group
    // per recipe component, and the blend's own columns are taken without its component groups.
    const std::size_t base = blend_columns(BlendResult{}).size();
    auto cols = blend_columns(BlendResult{});
    auto vals = blend_values(r.result);
    vals.resize(base);
    const auto component_cols = blend_columns([] {
        BlendResult one;
        one.components.resize(1);
        return one;
    }());
    const std::vector<std::string> groups(component_cols.begin() + static_cast<std::ptrdiff_t>(base), component_cols.end());  // c1_id, c1_mass_fraction, ...
    std::size_t next = 0;  // next component of the fitted blend
    for (std::size_t i = 0; i < p.blend.components.size(); ++i) {
        for (const auto& g : groups) cols.push_back(fmt::format("c{}{}", i + 1, g.substr(2)));
        const bool present = i < r.mass_fractions.size() && r.mass_fractions[i] > 0 && next < r.result.components.size();
        if (present) {
            BlendResult one;
            one.components = {r.result.components[next++]};
            const auto v = blend_values(one);
            vals.insert(vals.end(), v.begin() + static_cast<std::ptrdiff_t>(base), v.end());
        } else {
            // Not in the fitted blend: its label; at a zero fraction, zero shares and no Stokes
            // efficiency; without any fitted blend, empty cells.
            const bool zero = i < r.mass_fractions.size() && r.mass_fractions[i] == 0;
            vals.push_back(p.blend.components[i].label);
            for (std::size_t c = 1; c + 1 < groups.size(); ++c) vals.push_back(zero ? format_fixed(0.0, 6) : "");
            vals.push_back("");
        }
    }
    for (const char* key : {"fit_feasible", "fit_delta_uv_prime", "fit_objective_value"}) cols.push_back(key);
    vals.push_back(r.feasible ? "true" : "false");
    vals.push_back(fmt::format("{:.6f}", r.distance_uv_prime));
    vals.push_back(fmt::format("{:.4f}", r.objective_value));
    for (std::size_t i = 0; i < p.blend.components.size(); ++i) {
        cols.push_back(fmt::format("fit_{}", p.blend.components[i].label));
        vals.push_back(i < r.mass_fractions.size() ? fmt::format("{:.6f}", r.mass_fractions[i]) : "");
    }
    if (tr || tolerance_run) {
        for (const char* k : {"tol_draws", "tol_seed", "tol_steps_limit", "tol_inside_share", "tol_inside_standard_error",
                              "tol_mean_steps", "tol_sd_steps", "tol_p50_steps", "tol_p90_steps", "tol_p95_steps", "tol_p99_steps",
                              "tol_max_steps", "tol_nominal_steps", "tol_failed", "tol_batch_size", "tol_batches", "tol_sd_x_within",
                              "tol_sd_y_within", "tol_sd_x_between", "tol_sd_y_between", "tol_within_batch_steps_rms",
                              "tol_between_batch_steps_rms", "tol_worst_batch_mean_steps",
                              // issue 13, appended: the Rf / Rg spread over the first fidelity draws
                              "tol_fidelity_draws", "tol_mean_Rf", "tol_sd_Rf", "tol_p05_Rf", "tol_p95_Rf", "tol_mean_Rg", "tol_sd_Rg",
                              "tol_p05_Rg", "tol_p95_Rg"})
            cols.push_back(k);
        if (tr) {
            vals.push_back(fmt::format("{}", tr->draws));
            vals.push_back(fmt::format("{}", tr->seed));
            for (double v : {tr->steps_limit, tr->yield, tr->yield_standard_error, tr->mean_steps, tr->sd_steps, tr->p50, tr->p90, tr->p95,
                             tr->p99, tr->max_steps, tr->nominal_steps})
                vals.push_back(fmt::format("{:.6g}", v));
            vals.push_back(fmt::format("{}", tr->failed));
            vals.push_back(fmt::format("{}", tr->batch_size));
            vals.push_back(fmt::format("{}", tr->batches));
            for (double v : {tr->sd_x_within, tr->sd_y_within, tr->sd_x_between, tr->sd_y_between, tr->within_steps_rms, tr->between_steps_rms,
                             tr->worst_batch_mean_steps})
                vals.push_back(fmt::format("{:.6g}", v));
            vals.push_back(fmt::format("{}", tr->fidelity_draws));
            for (double v : {tr->rf.mean, tr->rf.sd, tr->rf.p05, tr->rf.p95, tr->rg.mean, tr->rg.sd, tr->rg.p05, tr->rg.p95})
                vals.push_back(std::isfinite(v) ? fmt::format("{:.6g}", v) : "");
        } else {
            vals.resize(cols.size());  // no tolerance run (the fit was infeasible): empty cells
        }
    }
    return {cols, vals};
}

nlohmann::ordered_json subsets_json(const SubsetTrials& c) {
    nlohmann::ordered_json a = nlohmann::ordered_json::array();
    for (std::size_t i = 0; i < c.trials.size(); ++i) {
        const auto& t = c.trials[i];
        a.push_back({{"components", t.labels}, {"feasible", t.feasible}, {"objective_value", t.objective_value},
                     {"best", c.found && i == c.best}, {"message", t.message}});
    }
    return a;
}

nlohmann::ordered_json spread_json(const ToleranceResult::Spread& s) {
    return {{"mean", number_or_null(s.mean)}, {"sd", number_or_null(s.sd)}, {"p05", number_or_null(s.p05)}, {"p95", number_or_null(s.p95)}};
}

nlohmann::ordered_json tolerance_json(const ToleranceProblem& tp, const ToleranceResult& tr, double ms, const std::string& ellipse_source) {
    nlohmann::ordered_json sources = nlohmann::ordered_json::object();
    for (const auto& [k, w] : tp.origins) sources[k] = w;
    return {{"draws", tr.draws}, {"seed", tr.seed}, {"weighing_relative", tp.weighing_relative},
              {"weighing_sigma", tp.weighing_sigma}, {"peak_sigma_nm", tp.peak_sigma_nm}, {"qe_sigma", tp.qe_sigma},
              {"steps_limit", tr.steps_limit}, {"ellipse", ellipse_source}, {"inside_share", tr.yield},
              {"inside_standard_error", tr.yield_standard_error}, {"inside", tr.inside}, {"failed", tr.failed},
              {"nominal_steps", tr.nominal_steps}, {"mean_steps", tr.mean_steps}, {"sd_steps", tr.sd_steps},
              {"p50_steps", tr.p50}, {"p90_steps", tr.p90}, {"p95_steps", tr.p95}, {"p99_steps", tr.p99},
              {"max_steps", tr.max_steps}, {"mean_x", tr.mean_x}, {"mean_y", tr.mean_y}, {"sd_x", tr.sd_x},
              {"sd_y", tr.sd_y}, {"d50_sigma", tp.d50_sigma}, {"absorption_sigma", tp.absorption_sigma},
              {"coating_weight_sigma_mg_per_cm2", tp.coating_weight_sigma_mg_per_cm2}, {"measurement_sigma_xy", tp.measurement_sigma_xy},
              {"batch_size", tr.batch_size}, {"batches", tr.batches}, {"sd_x_within", tr.sd_x_within}, {"sd_y_within", tr.sd_y_within},
              {"sd_x_between", tr.sd_x_between}, {"sd_y_between", tr.sd_y_between}, {"within_batch_steps_rms", tr.within_steps_rms},
              {"between_batch_steps_rms", tr.between_steps_rms}, {"worst_batch_mean_steps", tr.worst_batch_mean_steps},
              {"sources", sources}, {"notes", tr.notes}, {"time_ms", ms},
              // issue 13: the Rf / Rg spread over the first fidelity_draws draws
              {"fidelity_draws", tr.fidelity_draws}, {"nominal_Rf", number_or_null(tr.nominal_rf)}, {"nominal_Rg", number_or_null(tr.nominal_rg)},
              {"Rf", spread_json(tr.rf)}, {"Rg", spread_json(tr.rg)}};
}

std::string sensitivity_text(const std::vector<SensitivityRow>& rows) {
    return sensitivity_text(rows, "one percentage point more of (then renormalised)");
}

std::string sensitivity_text(const std::vector<SensitivityRow>& rows, const std::string& heading) {
    std::string o = "\n  sensitivity: " + heading + "\n" +
                    fmt::format("  {:<40} {:>9} {:>9} {:>8} {:>9} {:>7}\n", "component", "du'", "dv'", "dCCT K", "dDuv", "dRa");
    for (const auto& s : rows)
        o += fmt::format("  {:<40} {:>9} {:>9} {:>8} {:>9} {:>7}\n", s.label, format_signed(s.d_u_prime, 5), format_signed(s.d_v_prime, 5),
                         format_signed(s.d_cct_K, 1), format_signed(s.d_duv, 5), format_signed(s.d_ra, 2));
    return o;
}

std::string layer_fit_text(const LayerFitProblem& problem, const LayerFitResult& r) {
    const auto& d = r.design;
    std::string o;
    o += fmt::format("Fit of layer '{}'\n  target:     {} (x = {:.4f}, y = {:.4f})\n  objective:  {}\n  result:     {}\n\n",
                             problem.design.name, problem.target.description, problem.target.xy.x, problem.target.xy.y,
                             fit_objective_name(problem.objective), r.message);
    o += fmt::format("  {:<36} {:>10} {:>10}\n", "component", "start", "fitted");
    for (std::size_t i = 0; i < d.components.size(); ++i)
        o += fmt::format("  {:<36} {:>10.6f} {:>10.6f}\n", d.components[i].label, problem.design.components[i].loading,
                                 d.components[i].loading);
    if (problem.fit_thickness)
        o += fmt::format("  {:<36} {:>10.1f} {:>10.1f}\n", "thickness (um)", problem.design.thickness_um, d.thickness_um);
    o += "\n  constraints (re-checked with the layer model):\n";
    for (const auto& c : r.constraints) o += "    " + c.text + '\n';
    o += '\n' + layer_text(r.evaluation);
    return o;
}

std::pair<std::vector<std::string>, std::vector<std::string>> layer_fit_csv(const LayerFitResult& r) {
    const auto& d = r.design;
    auto cols = layer_columns();
    auto vals = layer_values(r.evaluation);
    cols.push_back("fit_feasible");
    vals.push_back(r.feasible ? "true" : "false");
    cols.push_back("fit_delta_uv_prime");
    vals.push_back(fmt::format("{:.6f}", r.distance_uv_prime));
    cols.push_back("fit_thickness_um");
    vals.push_back(fmt::format("{:.3f}", d.thickness_um));
    for (const auto& c : d.components) {
        cols.push_back("fit_loading_" + c.label);
        vals.push_back(fmt::format("{:.6f}", c.loading));
    }
    return {cols, vals};
}

nlohmann::ordered_json layer_fit_json(const LayerFitResult& r) {
    const auto& d = r.design;
    auto j = layer_json(r.evaluation);
    j["fit_feasible"] = r.feasible;
    j["fit_message"] = r.message;
    j["fit_delta_uv_prime"] = r.distance_uv_prime;
    j["fit_thickness_um"] = d.thickness_um;
    auto& l = j["fit_loadings"] = nlohmann::ordered_json::object();
    for (const auto& c : d.components) l[c.label] = c.loading;
    return j;
}

std::string layer_tolerance_text(const LayerToleranceProblem& t, const LayerToleranceResult& r, double ms, const std::string& ellipse_source) {
    std::string o = fmt::format("\nProduction tolerance of layer '{}' (Monte Carlo on the full layer model: {} modules, seed {}, {:.0f} ms)\n",
                                t.design.name, r.draws, r.seed, ms);
    o += fmt::format("  variation:  per module: loading sigma {:g} %, thickness sigma {:g} %, lot d50 sigma {:g} %, measurement sigma {:g} in x and y\n",
                     100 * t.loading_sigma, 100 * t.thickness_sigma, 100 * t.d50_sigma, t.measurement_sigma_xy);
    o += "              (defaults from memory; --loading-sigma, --thickness-sigma, --d50-sigma, --measurement-sigma set them)\n";
    o += fmt::format("  ellipse:    {}\n", ellipse_source);
    o += fmt::format("  nominal:    x = {:.4f}, y = {:.4f}, {:.2f} steps from the target\n", r.nominal_xy.x, r.nominal_xy.y, r.nominal_steps);
    o += fmt::format("  modules:    x {:.4f} (sd {:.4f}), y {:.4f} (sd {:.4f})\n", r.mean_x, r.sd_x, r.mean_y, r.sd_y);
    o += fmt::format("  MacAdam steps from the target: mean {:.2f}, sd {:.2f}; median {:.2f}, 90 % {:.2f}, 95 % {:.2f}, max {:.2f}\n", r.mean_steps,
                     r.sd_steps, r.p50, r.p90, r.p95, r.max_steps);
    o += fmt::format("  inside the {:g}-step ellipse: {:.1f} % of modules (standard error {:.1f} %, {} of {})\n", r.steps_limit, 100 * r.yield,
                     100 * r.yield_standard_error, r.inside, r.draws);
    o += fmt::format("  pump leak:  {:.2f} % (sd {:.2f} %) of the output; efficacy {:.1f} (sd {:.1f}) lm per W pump\n", 100 * r.mean_leak, 100 * r.sd_leak,
                     r.mean_efficacy, r.sd_efficacy);
    if (r.failed > 0) o += fmt::format("  failed:     {} modules the model could not evaluate: counted outside\n", r.failed);
    return o;
}

nlohmann::ordered_json layer_tolerance_json(const LayerToleranceProblem& t, const LayerToleranceResult& r, double ms, const std::string& ellipse_source) {
    return {{"draws", r.draws}, {"seed", r.seed}, {"loading_sigma", t.loading_sigma}, {"thickness_sigma", t.thickness_sigma},
            {"d50_sigma", t.d50_sigma}, {"measurement_sigma_xy", t.measurement_sigma_xy}, {"ellipse", ellipse_source},
            {"steps_limit", r.steps_limit}, {"inside", r.inside}, {"failed", r.failed}, {"inside_share", r.yield},
            {"inside_standard_error", r.yield_standard_error}, {"nominal_steps", r.nominal_steps}, {"mean_steps", r.mean_steps},
            {"sd_steps", r.sd_steps}, {"p50_steps", r.p50}, {"p90_steps", r.p90}, {"p95_steps", r.p95}, {"max_steps", r.max_steps},
            {"mean_x", r.mean_x}, {"mean_y", r.mean_y}, {"sd_x", r.sd_x}, {"sd_y", r.sd_y}, {"mean_pump_leak_fraction", r.mean_leak},
            {"sd_pump_leak_fraction", r.sd_leak}, {"mean_efficacy_lm_per_W_pump", r.mean_efficacy}, {"sd_efficacy_lm_per_W_pump", r.sd_efficacy},
            {"time_ms", ms}};
}

std::pair<std::vector<std::string>, std::vector<std::string>> layer_tolerance_csv(const LayerToleranceResult* r) {
    std::vector<std::string> cols{"tol_draws", "tol_inside_share", "tol_inside_standard_error", "tol_mean_steps", "tol_sd_steps", "tol_p95_steps",
                                  "tol_mean_pump_leak_fraction", "tol_mean_efficacy_lm_per_W_pump"};
    std::vector<std::string> vals;
    if (r) {
        vals.push_back(fmt::format("{}", r->draws));
        for (double v : {r->yield, r->yield_standard_error, r->mean_steps, r->sd_steps, r->p95, r->mean_leak, r->mean_efficacy})
            vals.push_back(fmt::format("{:.6g}", v));
    } else {
        vals.resize(cols.size());
    }
    return {cols, vals};
}

}  // namespace lampwright
