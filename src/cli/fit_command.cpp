// lampwright fit: solve a recipe's mass fractions for a target white.
#include "cli_common.hpp"

#include "lampwright/assessment_report.hpp"
#include "lampwright/blend_report.hpp"
#include "lampwright/error.hpp"
#include "lampwright/optimiser.hpp"
#include "lampwright/recipe.hpp"

#include <fmt/format.h>

#include <chrono>
#include <cmath>
#include <fstream>
#include <iostream>
#include <sstream>

namespace po = boost::program_options;

namespace lampwright::cli {

namespace {

std::pair<double, double> parse_pair(const std::string& s, const std::string& option) {
    const auto comma = s.find(',');
    try {
        if (comma == std::string::npos) throw std::invalid_argument("no comma");
        std::size_t used1 = 0, used2 = 0;
        const std::string a = s.substr(0, comma), b = s.substr(comma + 1);
        const double x = std::stod(a, &used1), y = std::stod(b, &used2);
        if (used1 != a.size() || used2 != b.size()) throw std::invalid_argument("trailing text");
        return {x, y};
    } catch (const std::exception&) {
        throw UsageError{fmt::format("fit: {} needs two numbers separated by a comma (e.g. 0.3805,0.3768), not '{}'", option, s)};
    }
}

std::string fmt_opt(const std::optional<double>& v, int decimals) { return v ? fmt::format("{:.{}f}", *v, decimals) : "n/a"; }

std::string fit_text(const FitProblem& p, const FitResult& r, double ms) {
    std::ostringstream o;
    const Assessment& a = r.result.assessment;
    o << fmt::format("Fit of '{}'\n", p.blend.name);
    o << fmt::format("  target:     {}", p.target.description);
    if (p.target.kind != Target::Kind::chromaticity) o << fmt::format(" (x = {:.4f}, y = {:.4f})", p.target.xy.x, p.target.xy.y);
    o << '\n';
    o << fmt::format("  objective:  {}\n", fit_objective_name(p.objective));
    o << fmt::format("  method:     {}, {} evaluations, {:.1f} ms\n", r.method, r.evaluations, ms);
    o << fmt::format("  result:     {}{}\n", r.feasible ? "" : "NOT FEASIBLE - ", r.message);
    o << "\n  component                                   start    fitted\n";
    for (std::size_t i = 0; i < p.blend.components.size(); ++i) {
        double total = 0;
        for (const auto& c : p.blend.components) total += c.mass_fraction;
        o << fmt::format("  {:<40}  {:.4f}   {:.6f}\n", p.blend.components[i].label, p.blend.components[i].mass_fraction / total,
                         r.mass_fractions[i]);
    }
    o << fmt::format("\n  x, y        {:.4f}, {:.4f}   u'v' {:.4f}, {:.4f}   delta u'v' from target {:.5f}\n", a.xy.x, a.xy.y,
                     a.uv_prime.u, a.uv_prime.v, r.distance_uv_prime);
    if (r.macadam_steps) o << fmt::format("  MacAdam     {:.2f} steps from the centre\n", *r.macadam_steps);
    if (r.inside_ansi_quadrangle) o << fmt::format("  ANSI C78.377 quadrangle: {}\n", *r.inside_ansi_quadrangle ? "inside" : "OUTSIDE");
    o << fmt::format("  CCT, Duv    {} K, {:+.4f}\n", a.cct.valid ? fmt::format("{:.0f}", a.cct.cct_K) : "n/a", a.cct.duv);
    std::optional<double> ra, r9;
    if (a.rendering) ra = a.rendering->ra, r9 = a.rendering->ri[8];
    o << fmt::format("  Ra, R9      {}, {}\n", fmt_opt(ra, 1), fmt_opt(r9, 1));
    o << fmt::format("  LER         {:.1f} lm/W;  efficacy {:.1f} lm per W absorbed\n", a.ler_lm_per_W, r.result.luminous_efficacy_absorbed);
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
    j["blend"] = blend_json(r.result, r.blend);
    return j;
}

}  // namespace

int run_fit(int argc, char** argv) {
    po::options_description opts(std::string(R"(Usage: lampwright fit RECIPE.toml TARGET [options]

Solves the recipe's mass fractions for a target white. The recipe's fractions are the starting
point; per-component limits come from min_fraction / max_fraction in the recipe.
Three components: the exact linear solve in absorbed-photon shares (then, with an objective, the
best blend within the tolerance); four or more: NLopt COBYLA from several deterministic starts.
Every answer is re-checked with the blend model; constraints at their limit are marked active.
An infeasible target is an error (exit 1) with the nearest reachable chromaticity where known.

TARGET (one of):
  --cct K [--duv D]      a CCT (K) and distance from the Planckian locus (default 0)
  --xy X,Y               CIE 1931 chromaticity
  --uv U,V               CIE 1976 u', v'
  --ansi K               ANSI C78.377 class centre (2200 2500 2700 3000 3500 4000 4500 5000 5700 6500)
  --flamp F4100          ANSI C78.376 lamp colour with an n-step MacAdam ellipse (--steps, default 4;
                         centres and ellipses from memory, see data/targets/README.md)

)") + kSafetyNotice + "\nOptions");
    std::string format = "text", recipe_out, xy, uv, flamp, maximize = "change", method = "auto";
    std::vector<std::string> folders, recipes;
    double cct = 0, duv = 0, tolerance = kDefaultFitToleranceUvPrime, steps = kAnsiC78376Steps, r9_weight = 0.5;
    int ansi = 0;
    opts.add_options()("help,h", "show this help")("cct", po::value(&cct), "target CCT, K")("duv", po::value(&duv), "target Duv (with --cct)")
        ("xy", po::value(&xy), "target x,y")("uv", po::value(&uv), "target u',v'")("ansi", po::value(&ansi), "ANSI C78.377 nominal CCT class")
        ("flamp", po::value(&flamp), "ANSI C78.376 lamp colour, e.g. F4100")("steps", po::value(&steps), "MacAdam ellipse size with --flamp (default 4)")
        ("maximize", po::value(&maximize), "ra | r9 | ra-r9 | ler | efficacy; default: the smallest change from the recipe")
        ("r9-weight", po::value(&r9_weight), "k in (1-k) Ra + k R9 for --maximize ra-r9 (default 0.5)")
        ("tolerance", po::value(&tolerance), "chromaticity tolerance, delta u'v' (default 0.0005; not with --flamp)")
        ("min-ra", po::value<double>(), "require Ra >= this")("min-r9", po::value<double>(), "require R9 >= this")
        ("min-ler", po::value<double>(), "require LER >= this (lm/W)")
        ("method", po::value(&method), "auto | exact | nlopt (default auto)")
        ("sensitivity", "text format: also print what one percentage point more of each component does to u', v', CCT, Duv, Ra")
        ("recipe-out", po::value(&recipe_out), "write the fitted recipe (TOML, loadable by 'blend')")
        ("format,f", po::value(&format), "text | csv | json (default text)")
        ("phosphors", po::value(&folders), "a folder of your own phosphor files (*.toml); repeatable");
    po::variables_map vm;
    if (!parse_command_line(argc, argv, opts, "recipe", &recipes, vm, "fit")) return kExitOk;
    const Format f = parse_format(format);
    if (recipes.size() != 1) throw UsageError{"fit: give exactly one recipe file (see lampwright fit --help)"};
    const int n_targets = static_cast<int>(vm.count("cct") + vm.count("xy") + vm.count("uv") + vm.count("ansi") + vm.count("flamp"));
    if (n_targets != 1) throw UsageError{"fit: give exactly one target: --cct, --xy, --uv, --ansi or --flamp"};
    if (vm.count("duv") && !vm.count("cct")) throw UsageError{"fit: --duv goes with --cct"};
    if (vm.count("steps") && !vm.count("flamp")) throw UsageError{"fit: --steps goes with --flamp"};
    if (vm.count("tolerance") && vm.count("flamp")) throw UsageError{"fit: --flamp uses its MacAdam ellipse; --tolerance does not apply"};
    if (!(tolerance > 0)) throw UsageError{"fit: --tolerance must be positive"};

    FitProblem p;
    try {
        if (vm.count("cct")) p.target = target_cct(cct, duv);
        if (vm.count("xy")) {
            const auto [x, y] = parse_pair(xy, "--xy");
            p.target = target_xy(x, y);
        }
        if (vm.count("uv")) {
            const auto [u, v] = parse_pair(uv, "--uv");
            p.target = target_uv_prime(u, v);
        }
        if (vm.count("ansi")) p.target = target_ansi_c78377(ansi);
        if (vm.count("flamp")) p.target = target_ansi_c78376(flamp, steps);
        p.objective = parse_fit_objective(maximize);
    } catch (const InputError&) {
        throw;
    } catch (const Error& e) {
        throw UsageError{std::string("fit: ") + e.what()};
    }
    if (maximize == "change" && vm.count("maximize")) throw UsageError{"fit: --maximize takes ra, r9, ra-r9, ler or efficacy"};
    FitOptions options;
    if (method == "exact") options.method = FitMethod::exact;
    else if (method == "nlopt") options.method = FitMethod::nlopt;
    else if (method != "auto") throw UsageError{"fit: --method must be auto, exact or nlopt"};
    p.r9_weight = r9_weight;
    p.tolerance_uv_prime = tolerance;
    if (vm.count("min-ra")) p.min_ra = vm["min-ra"].as<double>();
    if (vm.count("min-r9")) p.min_r9 = vm["min-r9"].as<double>();
    if (vm.count("min-ler")) p.min_ler = vm["min-ler"].as<double>();

    const Recipe recipe = load_recipe(recipes.front(), folders);
    p.blend = recipe.blend;
    FitResult r;
    try {
        (void)evaluate_blend(recipe.blend);  // loads the tables once, so the time below is the fit's
    } catch (const Error&) {
    }
    const auto t0 = std::chrono::steady_clock::now();
    try {
        r = solve(p, options);
    } catch (const InputError&) {
        throw;
    } catch (const Error& e) {
        throw InputError(recipe.path, 0, e.what());
    }
    const double ms = std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - t0).count();
    for (const auto& w : r.result.assessment.warnings) print_warning(fmt::format("{}: {}", r.result.name, w));

    switch (f) {
        case Format::text:
            std::cout << fit_text(p, r, ms);
            if (vm.count("sensitivity")) {
                std::cout << "\n  sensitivity: one percentage point more of (then renormalised)\n"
                          << fmt::format("  {:<40} {:>9} {:>9} {:>8} {:>9} {:>7}\n", "component", "du'", "dv'", "dCCT K", "dDuv", "dRa");
                for (const auto& s : fraction_sensitivity(r.blend))
                    std::cout << fmt::format("  {:<40} {:+9.5f} {:+9.5f} {:+8.1f} {:+9.5f} {:+7.2f}\n", s.label, s.d_u_prime, s.d_v_prime,
                                             s.d_cct_K, s.d_duv, s.d_ra);
            }
            break;
        case Format::csv: {
            auto cols = blend_columns(r.result);
            auto vals = blend_values(r.result);
            for (const char* k : {"fit_feasible", "fit_delta_uv_prime", "fit_objective_value"}) cols.push_back(k);
            vals.push_back(r.feasible ? "yes" : "no");
            vals.push_back(fmt::format("{:.6f}", r.distance_uv_prime));
            vals.push_back(fmt::format("{:.4f}", r.objective_value));
            for (std::size_t i = 0; i < p.blend.components.size(); ++i) {
                cols.push_back(fmt::format("fit_{}", p.blend.components[i].label));
                vals.push_back(fmt::format("{:.6f}", r.mass_fractions[i]));
            }
            std::cout << csv_line(cols) << '\n' << csv_line(vals) << '\n';
            break;
        }
        case Format::json: std::cout << fit_json(p, r, ms).dump(2) << '\n'; break;
    }
    if (!r.feasible) throw InputError(recipe.path, 0, "target " + p.target.description + ": " + r.message);
    if (!recipe_out.empty()) {
        std::ofstream out(recipe_out);
        if (!out) throw InputError(recipe_out, 0, "cannot be written");
        BlendInput b = r.blend;
        b.name = recipe.blend.name + " (fitted)";
        out << recipe_to_toml(b, {fmt::format("Fitted by lampwright fit from {}: target {}; {}.", recipe.path, p.target.description,
                                              fit_objective_name(p.objective))});
    }
    return kExitOk;
}

}  // namespace lampwright::cli
