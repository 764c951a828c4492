// lampwright fit: solve a recipe's mass fractions for a target white.
#include "cli_common.hpp"

#include "lampwright/report/assessment_report.hpp"
#include "lampwright/report/blend_report.hpp"
#include "lampwright/report/fit_report.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/led/layer_design.hpp"
#include "lampwright/led/layer_fit.hpp"
#include "lampwright/design/optimiser.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/design/tolerance.hpp"
#include "lampwright/design/tradeoff.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cctype>
#include <chrono>
#include <cmath>
#include <iostream>
#include <sstream>


namespace po = boost::program_options;

namespace lampwright::cli {

namespace {

// The ranges of fit's numeric options (cli_common.hpp, NumberRange). Targets: CCT 1000-25000 K
// (the Planckian range of white-light targets, CIE 15:2004 9.5 for Duv within +-0.05); the index
// floors span what CIE 13.3 can give (R9 of real sources goes well below -100; common practice,
// no source); LER can never exceed 683 lm/W (the peak of V(lambda), CIE 15:2004); sigmas are
// fractions, not percentages, and a sigma of 50 % of a mass or a QE is already no process.
const NumberRange kCctRange{.min = 1000, .max = 25000, .unit = "K"};
const NumberRange kDuvRange{.min = -0.05, .max = 0.05, .unit = "Duv"};
const NumberRange kStepsRange{.min = 0, .max = 20, .unit = "MacAdam steps", .min_exclusive = true};
const NumberRange kR9WeightRange{.min = 0, .max = 1};
const NumberRange kToleranceRange{.min = 0, .max = 0.05, .unit = "delta u'v'", .min_exclusive = true};
const NumberRange kMinRaRange{.min = -100, .max = 100, .unit = "Ra"};
// CIE 224:2017 eq. 10: Rf lies in 0-100.
const NumberRange kMinRfRange{.min = 0, .max = 100, .unit = "Rf"};
// TM-30-20 Rg of white-light sources lies roughly in 60-140 (its CVG axes); 0-200 leaves room for
// any blend (common practice, no source). Rcs,h1 is a chroma change in per cent of the
// reference's chroma: -100 % is no chroma left; +-100 % bounds what any white light gives
// (common practice, no source).
const NumberRange kRgRange{.min = 0, .max = 200, .unit = "Rg", .min_exclusive = true};
const NumberRange kRcsRange{.min = -100, .max = 100, .unit = "%", .note = "Rcs,h1 in per cent"};
const NumberRange kMinR9Range{.min = -300, .max = 100, .unit = "R9"};
const NumberRange kMinLerRange{.min = 0, .max = 683, .unit = "lm/W", .note = "683 lm/W is the most any light can reach"};
const NumberRange kAnsiRange{.min = 2200, .max = 6500, .unit = "K", .whole = true};
const NumberRange kPointsRange{.min = 2, .max = 1000, .unit = "points", .whole = true};
const NumberRange kChooseRange{.min = 1, .max = 8, .unit = "components", .whole = true};
const NumberRange kLayerSigmaRange{.min = 0, .max = 0.5, .note = "a fraction: 0.02 = 2 %"};
const NumberRange kDrawsRange{.min = 1, .max = 100000000, .unit = "draws", .whole = true};
const NumberRange kSeedRange{.min = 0, .max = 4294967295.0, .whole = true};
// The production-tolerance sigmas: ranges from their one place, kToleranceSources (design/tolerance.hpp).
NumberRange source_range(const char* key, const std::string& unit = "", const std::string& note = "") {
    const ToleranceSource& s = tolerance_source(key);
    return NumberRange{.min = s.min, .max = s.max, .unit = unit, .whole = std::string(key) == "batch_size", .note = note};
}
const NumberRange kWeighingSigmaRange = source_range(
    "weighing_sigma", "", "a fraction of each component's mass: 0.005 = 0.5 %; with --weighing-absolute in mass-fraction units");
const NumberRange kPeakSigmaRange = source_range("peak_sigma_nm", "nm");
const NumberRange kQeSigmaRange = source_range("qe_sigma", "", "a fraction of the QE: 0.01 = 1 %, not a percentage");
const NumberRange kD50SigmaRange = source_range("d50_sigma", "", "a fraction of the lot's d50: 0.05 = 5 %");
const NumberRange kAbsorptionSigmaRange = source_range("absorption_sigma", "", "a fraction of the per-mass absorption");
const NumberRange kCoatingSigmaRange = source_range("coating_weight_sigma_mg_per_cm2", "mg/cm2");
const NumberRange kMeasurementSigmaRange = source_range("measurement_sigma_xy", "(in x and in y)");
const NumberRange kBatchSizeRange = source_range("batch_size", "lamps");
// Chromaticity coordinates of a target (CIE 15:2004): x, y and u', v' all lie in (0, 1).
const NumberRange kXRange{.min = 0, .max = 1, .unit = "(CIE 1931 x or y)", .min_exclusive = true};
const NumberRange kUvRange{.min = 0, .max = 1, .unit = "(CIE 1976 u' or v')", .min_exclusive = true};

std::pair<double, double> parse_pair(const std::string& s, const std::string& option, const NumberRange& range,
                                     const char* example = "0.3805,0.3768") {
    const auto comma = s.find(',');
    if (comma == std::string::npos || s.find(',', comma + 1) != std::string::npos)
        throw UsageError{fmt::format("fit: --{} needs two numbers separated by a comma (e.g. {}), not '{}'", option, example, s)};
    try {
        return {parse_number(s.substr(0, comma), option, range), parse_number(s.substr(comma + 1), option, range)};
    } catch (const UsageError& e) {
        throw UsageError{fmt::format("fit: {} (in '{}')", e.message, s)};
    }
}

std::vector<double> parse_list(const std::string& s, const std::string& option, const NumberRange& range) {
    try {
        return parse_number_list(s, option, range);
    } catch (const UsageError& e) {
        throw UsageError{"fit: " + e.message};
    }
}

}  // namespace

int run_fit(int argc, char** argv) {
    po::options_description opts(std::string(R"(Usage: lampwright fit RECIPE.toml TARGET [options]
       lampwright fit DESIGN.toml TARGET [--maximize ...] [--fit-thickness]   (LED layer design)

Solves the recipe's mass fractions for a target white. For an LED layer design (a TOML file with
[layer]) it fits the phosphor loadings (and with --fit-thickness the thickness) so the light at
the operating temperature lands on the target (NLopt COBYLA; --recipe-out writes the design). The recipe's fractions are the starting
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

TRADE-OFF FRONT (instead of one fit):
  --front ra-efficacy    maximise efficacy (lm per W absorbed) for a rising floor on Ra
  --front ra-ler         maximise LER for a rising floor on Ra
  --front ra-r9          maximise Ra for a rising floor on R9
  --front rf-efficacy    maximise efficacy (lm per W absorbed) for a rising floor on Rf (CIE 224)
  The floor runs from the floor figure of the unconstrained best blend up to the best reachable one
  (epsilon-constraint sweep, --points solves); --front-csv and --front-svg write the front.

BEST K OF N: --choose K solves every K-component subset of the recipe (at most 8 components) and
  keeps the best feasible one by the objective; the subsets that cannot meet the target are listed.
  LED layer designs too: each subset's loadings fitted on the layer model.

LED LAYER DESIGNS: --sensitivity prints what 1 % more of each loading and of the thickness does;
  --tolerance-run draws --draws modules (default 2000) on the full layer model with per-module
  loading (--loading-sigma, default 0.02), thickness (--thickness-sigma, 0.03), lot d50
  (--d50-sigma, 0.05) and measurement (--measurement-sigma, 0.0015) errors (defaults from memory).

PRODUCTION TOLERANCE: --tolerance-run draws lamps around the fitted recipe (Monte Carlo), made in
  batches of --batch-size lamps (default 50). Per batch (shared by its lamps): the weighing of the
  powder mix (--weighing-sigma, relative to each component's mass unless --weighing-absolute) and
  each phosphor's lot: d50 (--d50-sigma), per-mass absorption (--absorption-sigma), brightness
  (--qe-sigma) and, for band emitters only, the emission peak (--peak-sigma nm). Per lamp: coating
  weight (--coating-weight-sigma mg/cm2) and measurement repeatability (--measurement-sigma, in x
  and y). Each sigma has a default (from memory, printed with the result); a recipe's [tolerance]
  table sets them, and these options override the recipe. Reports the chromaticity in MacAdam
  steps from the target, its spread within and between batches, and the share of lamps inside the
  --steps ellipse (default 4; the target's own ellipse with --flamp, else the nearest ANSI C78.376
  ellipse moved to the target). Same --seed, same draws (with one standard library). A per-batch
  sigma is one number for all components or one per component, comma-separated.

)") + kSafetyNotice + "\nOptions");
    std::string format = "text", recipe_out, xy, uv, flamp, maximize = "change", method = "auto";
    std::vector<std::string> folders, recipes;
    double cct = 0, duv = 0, tolerance = kDefaultFitToleranceUvPrime, steps = kAnsiC78376Steps, r9_weight = 0.5, rg_weight = 0.5, coating_sigma = 0, measurement_sigma = 0, batch_size = 50;
    int ansi = 0, points = 30, choose = 0;
    std::string front, front_csv_path, front_svg_path, weighing_sigma, peak_sigma, qe_sigma, d50_sigma, absorption_sigma;
    long long draws = 100000, seed = 1;
    double min_ra = 0, min_r9 = 0, min_ler = 0, min_rf = 0, min_rg = 0, max_rg = 0, loading_sigma = 0, thickness_sigma = 0;
    std::string rcs_h1;
    opts.add_options()("help,h", "show this help");
    add_number_option(opts, "cct", &cct, kCctRange, "target CCT");
    add_number_option(opts, "duv", &duv, kDuvRange, "target Duv (with --cct; default 0)");
    opts.add_options()("xy", po::value(&xy), "target x,y (each above 0, below 1)")("uv", po::value(&uv), "target u',v' (each above 0, below 1)");
    add_number_option(opts, "ansi", &ansi, kAnsiRange, "ANSI C78.377 nominal CCT class");
    opts.add_options()("flamp", po::value(&flamp), "ANSI C78.376 lamp colour, e.g. F4100");
    add_number_option(opts, "steps", &steps, kStepsRange, "MacAdam ellipse size with --flamp or --tolerance-run (default 4)");
    opts.add_options()("maximize", po::value(&maximize), "ra | r9 | ra-r9 | ler | efficacy | rf (CIE 224 Rf) | rg (TM-30 Rg) | rf-rg; default: the smallest change from the recipe");
    add_number_option(opts, "r9-weight", &r9_weight, kR9WeightRange, "k in (1-k) Ra + k R9 for --maximize ra-r9 (default 0.5)");
    add_number_option(opts, "rg-weight", &rg_weight, kR9WeightRange, "k in (1-k) Rf + k Rg for --maximize rf-rg (default 0.5)");
    add_number_option(opts, "tolerance", &tolerance, kToleranceRange, "chromaticity tolerance, delta u'v' (default 0.0005; not with --flamp)");
    add_number_option(opts, "min-ra", &min_ra, kMinRaRange, "require Ra >= this");
    add_number_option(opts, "min-r9", &min_r9, kMinR9Range, "require R9 >= this");
    add_number_option(opts, "min-ler", &min_ler, kMinLerRange, "require LER >= this");
    add_number_option(opts, "min-rf", &min_rf, kMinRfRange, "require CIE 224 Rf >= this (blend recipes)");
    add_number_option(opts, "min-rg", &min_rg, kRgRange, "require TM-30-20 Rg >= this (blend recipes)");
    add_number_option(opts, "max-rg", &max_rg, kRgRange, "require TM-30-20 Rg <= this (blend recipes)");
    opts.add_options()("rcs-h1", po::value(&rcs_h1)->value_name("LO,HI"),
                       ("require LO <= TM-30-20 Rcs,h1 <= HI, per cent (blend recipes) [each " + kRcsRange.describe() + "]").c_str());
    opts.add_options()("method", po::value(&method), "auto | exact | nlopt (default auto)")
        ("sensitivity", "text format: also print what one percentage point more of each component does to u', v', CCT, Duv, Ra")
        ("recipe-out", po::value(&recipe_out), "write the fitted recipe (TOML, loadable by 'blend')")
        ("format,f", po::value(&format), "text | csv | json (default text)")
        ("phosphors", po::value(&folders), "a folder of your own phosphor files (*.toml); repeatable")
        ("front", po::value(&front), "ra-efficacy | ra-ler | ra-r9 | rf-efficacy: compute the trade-off front instead of one fit");
    add_number_option(opts, "points", &points, kPointsRange, "points on the front (default 30)");
    opts.add_options()("front-csv", po::value(&front_csv_path), "write the front as CSV")
        ("front-svg", po::value(&front_svg_path), "write the front as an SVG chart");
    add_number_option(opts, "choose", &choose, kChooseRange, "use the best K of the recipe's components");
    opts.add_options()("tolerance-run", "Monte Carlo production tolerance of the fitted recipe");
    add_number_option(opts, "draws", &draws, kDrawsRange, "Monte Carlo draws (default 100000)");
    opts.add_options()("weighing-sigma", po::value(&weighing_sigma),
                       ("weighing error sigma, relative to each component's mass; one, or one per component [" + kWeighingSigmaRange.describe() + "]").c_str())
        ("weighing-absolute", "--weighing-sigma is in mass-fraction units instead")
        ("peak-sigma", po::value(&peak_sigma), ("phosphor lot emission peak shift sigma; one, or one per component [" + kPeakSigmaRange.describe() + "]").c_str())
        ("qe-sigma", po::value(&qe_sigma), ("phosphor lot QE (brightness) sigma, relative; one, or one per component [" + kQeSigmaRange.describe() + "]").c_str())
        ("d50-sigma", po::value(&d50_sigma), ("phosphor lot d50 sigma, relative; one, or one per component [" + kD50SigmaRange.describe() + "]").c_str())
        ("absorption-sigma", po::value(&absorption_sigma),
         ("phosphor lot per-mass absorption sigma, relative; one, or one per component [" + kAbsorptionSigmaRange.describe() + "]").c_str());
    add_number_option(opts, "coating-weight-sigma", &coating_sigma, kCoatingSigmaRange, "lamp-to-lamp coating weight sigma, mg/cm2");
    add_number_option(opts, "measurement-sigma", &measurement_sigma, kMeasurementSigmaRange, "measurement repeatability sigma in x and in y");
    add_number_option(opts, "batch-size", &batch_size, kBatchSizeRange, "lamps per batch (share the powder mix and lots)");
    add_number_option(opts, "seed", &seed, kSeedRange, "random-number seed (default 1)");
    add_number_option(opts, "loading-sigma", &loading_sigma, kLayerSigmaRange, "LED layer designs: module-to-module loading sigma, relative (default 0.02)");
    add_number_option(opts, "thickness-sigma", &thickness_sigma, kLayerSigmaRange, "LED layer designs: module-to-module thickness sigma, relative (default 0.03)");
    opts.add_options()("fit-thickness", "LED layer designs: fit the layer thickness as well as the loadings");
    po::variables_map vm;
    if (!parse_command_line(argc, argv, opts, "recipe", &recipes, vm, "fit")) return kExitOk;
    const Format f = parse_format(format);
    if (recipes.size() != 1) throw UsageError{"fit: give exactly one recipe file (see lampwright fit --help)"};
    const int n_targets = static_cast<int>(vm.count("cct") + vm.count("xy") + vm.count("uv") + vm.count("ansi") + vm.count("flamp"));
    if (n_targets != 1) throw UsageError{"fit: give exactly one target: --cct, --xy, --uv, --ansi or --flamp"};
    if (vm.count("duv") && !vm.count("cct")) throw UsageError{"fit: --duv goes with --cct"};
    const bool tolerance_run = vm.count("tolerance-run") > 0;
    if (vm.count("steps") && !vm.count("flamp") && !tolerance_run) throw UsageError{"fit: --steps goes with --flamp or --tolerance-run"};
    const bool want_front = vm.count("front") > 0;
    for (const char* o : {"points", "front-csv", "front-svg"})
        if (vm.count(o) && !want_front) throw UsageError{fmt::format("fit: --{} goes with --front", o)};
    for (const char* o : {"maximize", "choose", "tolerance-run", "recipe-out", "sensitivity"})
        if (want_front && vm.count(o)) throw UsageError{fmt::format("fit: --front sets its own objective and gives many blends; --{} does not apply", o)};
    for (const char* o : {"draws", "weighing-sigma", "weighing-absolute", "peak-sigma", "qe-sigma", "seed", "d50-sigma", "absorption-sigma",
                          "coating-weight-sigma", "measurement-sigma", "batch-size", "loading-sigma", "thickness-sigma"})
        if (vm.count(o) && !tolerance_run) throw UsageError{fmt::format("fit: --{} goes with --tolerance-run", o)};
    std::optional<FrontKind> front_kind;
    if (want_front) {
        try {
            front_kind = parse_front_kind(front);
        } catch (const Error& e) {
            throw UsageError{std::string("fit: --front: ") + e.what()};
        }
        std::string swept = front_floor_label(*front_kind);
        std::transform(swept.begin(), swept.end(), swept.begin(), [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
        if (vm.count("min-" + swept))
            throw UsageError{fmt::format("fit: --front {} sweeps the {} floor itself; drop --min-{}", front, front_floor_label(*front_kind), swept)};
    }
    if (vm.count("tolerance") && vm.count("flamp")) throw UsageError{"fit: --flamp uses its MacAdam ellipse; --tolerance does not apply"};

    FitProblem p;
    try {
        if (vm.count("cct")) p.target = target_cct(cct, duv);
        if (vm.count("xy")) {
            const auto [x, y] = parse_pair(xy, "xy", kXRange);
            p.target = target_xy(x, y);
        }
        if (vm.count("uv")) {
            const auto [u, v] = parse_pair(uv, "uv", kUvRange);
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
    if (maximize == "change" && vm.count("maximize")) throw UsageError{"fit: --maximize takes ra, r9, ra-r9, ler, efficacy, rf, rg or rf-rg"};
    FitOptions options;
    if (method == "exact") options.method = FitMethod::exact;
    else if (method == "nlopt") options.method = FitMethod::nlopt;
    else if (method != "auto") throw UsageError{"fit: --method must be auto, exact or nlopt"};
    p.r9_weight = r9_weight;
    p.rg_weight = rg_weight;
    if (vm.count("r9-weight") && p.objective != FitObjective::ra_r9) throw UsageError{"fit: --r9-weight goes with --maximize ra-r9"};
    if (vm.count("rg-weight") && p.objective != FitObjective::rf_rg) throw UsageError{"fit: --rg-weight goes with --maximize rf-rg"};
    p.tolerance_uv_prime = tolerance;
    if (vm.count("min-ra")) p.min_ra = min_ra;
    if (vm.count("min-r9")) p.min_r9 = min_r9;
    if (vm.count("min-ler")) p.min_ler = min_ler;
    if (vm.count("min-rf")) p.min_rf = min_rf;
    if (vm.count("min-rg")) p.min_rg = min_rg;
    if (vm.count("max-rg")) p.max_rg = max_rg;
    if (p.min_rg && p.max_rg && *p.min_rg > *p.max_rg)
        throw UsageError{fmt::format("fit: --min-rg {:g} is above --max-rg {:g}", *p.min_rg, *p.max_rg)};
    if (vm.count("rcs-h1")) {
        const auto [lo, hi] = parse_pair(rcs_h1, "rcs-h1", kRcsRange, "-5,15");
        if (lo > hi) throw UsageError{fmt::format("fit: --rcs-h1 {}: the low end {:g} is above the high end {:g}", rcs_h1, lo, hi)};
        p.min_rcs_h1_percent = lo;
        p.max_rcs_h1_percent = hi;
    }

    std::vector<FileRole> inputs{{recipes.front(), "the recipe"}};
    add_inputs(inputs, folders, "--phosphors folder");
    check_outputs_apart({{recipe_out, "--recipe-out"}, {front_csv_path, "--front-csv"}, {front_svg_path, "--front-svg"}}, inputs);

    if (const TomlDoc doc = TomlDoc::from_file(recipes.front()); is_layer_design(doc)) {
        for (const char* o : {"front", "min-ler", "min-rf", "min-rg", "max-rg", "rcs-h1", "method", "weighing-sigma", "weighing-absolute",
                              "peak-sigma", "qe-sigma", "absorption-sigma", "coating-weight-sigma", "batch-size"})
            if (vm.count(o)) throw UsageError{fmt::format("fit: --{} applies to blend recipes, not to LED layer designs", o)};
        LayerFitExtras extras;
        extras.choose = vm.count("choose") ? choose : 0;
        extras.sensitivity = vm.count("sensitivity") > 0;
        if (tolerance_run) {
            LayerToleranceProblem t;
            t.steps = steps;
            t.seed = static_cast<std::uint64_t>(seed);
            t.draws = vm.count("draws") ? static_cast<std::size_t>(draws) : 2000;  // each module is a full transport solve (about 1 ms)
            if (vm.count("loading-sigma")) t.loading_sigma = loading_sigma;
            if (vm.count("thickness-sigma")) t.thickness_sigma = thickness_sigma;
            if (vm.count("measurement-sigma")) t.measurement_sigma_xy = measurement_sigma;
            if (vm.count("d50-sigma")) {
                const auto v = parse_list(d50_sigma, "d50-sigma", kD50SigmaRange);
                if (v.size() != 1) throw UsageError{"fit: --d50-sigma takes one value for an LED layer design"};
                t.d50_sigma = v.front();
            }
            extras.tolerance = t;
        }
        LayerFitProblem lp;
        lp.design = layer_design_from_toml(doc, folders);
        lp.target = p.target;
        lp.objective = p.objective;
        lp.r9_weight = p.r9_weight;
        lp.rg_weight = p.rg_weight;
        lp.tolerance_uv_prime = p.tolerance_uv_prime;
        lp.min_ra = p.min_ra;
        lp.min_r9 = p.min_r9;
        lp.fit_thickness = vm.count("fit-thickness") > 0;
        return run_layer_fit(lp, f, recipe_out, extras);
    }
    for (const char* o : {"fit-thickness", "loading-sigma", "thickness-sigma"})
        if (vm.count(o)) throw UsageError{fmt::format("fit: --{} applies to LED layer designs", o)};
    const Recipe recipe = load_recipe(recipes.front(), folders);
    for (const auto& n : recipe.notes) print_note(n);
    p.blend = recipe.blend;
    const std::size_t n_components = p.blend.components.size();
    // The tolerance sigmas: the command line, else the recipe's [tolerance], else the default.
    ToleranceProblem settings;
    if (tolerance_run) {
        const RecipeTolerance& rt = recipe.tolerance;
        auto list = [&](const char* key, const char* option, const std::string& text, const NumberRange& range) {
            std::vector<double> v;
            if (vm.count(option)) {
                v = parse_list(text, option, range);
                if (v.size() != 1 && v.size() != n_components)
                    throw UsageError{fmt::format("fit: --{} needs one value, or one per component of the recipe ({}), not {}", option,
                                                 n_components, v.size())};
                settings.origins.emplace_back(key, fmt::format("--{}", option));
            } else if (const auto* r = rt.find(key)) {
                v = *r;
                settings.origins.emplace_back(key, fmt::format("the recipe's [tolerance] ({})", recipe.path));
            } else {
                v = {tolerance_source(key).default_value};
                settings.origins.emplace_back(key, fmt::format("default ({})", tolerance_source(key).source));
            }
            return v;
        };
        auto one = [&](const char* key, const char* option, double value) { return list(key, option, fmt::format("{}", value), NumberRange{-1e300, 1e300}).front(); };
        settings.weighing_sigma = list("weighing_sigma", "weighing-sigma", weighing_sigma, kWeighingSigmaRange);
        settings.peak_sigma_nm = list("peak_sigma_nm", "peak-sigma", peak_sigma, kPeakSigmaRange);
        settings.qe_sigma = list("qe_sigma", "qe-sigma", qe_sigma, kQeSigmaRange);
        settings.d50_sigma = list("d50_sigma", "d50-sigma", d50_sigma, kD50SigmaRange);
        settings.absorption_sigma = list("absorption_sigma", "absorption-sigma", absorption_sigma, kAbsorptionSigmaRange);
        settings.coating_weight_sigma_mg_per_cm2 = one("coating_weight_sigma_mg_per_cm2", "coating-weight-sigma", coating_sigma);
        settings.measurement_sigma_xy = one("measurement_sigma_xy", "measurement-sigma", measurement_sigma);
        settings.batch_size = static_cast<std::size_t>(one("batch_size", "batch-size", batch_size));
        const auto* abs_key = rt.find("weighing_absolute");
        settings.weighing_relative = !(vm.count("weighing-absolute") > 0 || (abs_key && abs_key->front() > 0));
        bool any = settings.coating_weight_sigma_mg_per_cm2 > 0 || settings.measurement_sigma_xy > 0;
        for (const auto* v : {&settings.weighing_sigma, &settings.peak_sigma_nm, &settings.qe_sigma, &settings.d50_sigma, &settings.absorption_sigma})
            for (double x : *v) any = any || x > 0;
        if (!any) throw UsageError{"fit: --tolerance-run needs a sigma above zero (every source of variation is set to zero)"};
    }
    if (vm.count("choose") && static_cast<std::size_t>(choose) > n_components)
        throw UsageError{fmt::format("fit: --choose {}: the recipe has only {} components", choose, n_components)};
    if (vm.count("choose") && n_components > 8) throw UsageError{fmt::format("fit: --choose works on recipes of at most 8 components, not {}", n_components)};
    FitResult r;
    try {
        (void)evaluate_blend(recipe.blend);  // loads the tables once, so the time below is the fit's
    } catch (const Error&) {
    }
    const auto t0 = std::chrono::steady_clock::now();
    auto elapsed_ms = [&] { return std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - t0).count(); };

    if (front_kind) {
        const TradeoffFront tf = naming_input(recipe.path, [&] { return tradeoff_front(p, *front_kind, points, options); });
        const double fms = elapsed_ms();
        switch (f) {
            case Format::text: std::cout << front_text(p, tf, fms); break;
            case Format::csv: std::cout << front_csv(p, tf); break;
            case Format::json: std::cout << dump_json(front_json(p, tf, fms)) << '\n'; break;
        }
        if (!front_csv_path.empty()) write_output_or_throw(front_csv_path, front_csv(p, tf));
        if (!front_svg_path.empty()) write_document_or_throw(front_svg_path, front_svg(p, tf));
        if (std::none_of(tf.points.begin(), tf.points.end(), [](const FrontPoint& q) { return q.feasible; }))
            throw InputError(recipe.path, 0, "no point of the front is feasible");
        return kExitOk;
    }

    std::optional<SubsetChoice> subsets;
    naming_input(recipe.path, [&] {
        if (vm.count("choose")) {
            subsets = choose_components(p, choose, options);
            r = subsets->result;
            if (!subsets->found) {
                r.feasible = false;
                r.message = fmt::format("no subset of {} of the {} components meets the target and constraints", choose, n_components);
            }
        } else {
            r = solve(p, options);
        }
    });
    const double ms = elapsed_ms();
    if (subsets && !subsets->found) {
        std::cerr << subsets_text(*subsets, n_components);
        throw InputError(recipe.path, 0, "target " + p.target.description + ": " + r.message);
    }

    // The production tolerance of the fitted recipe.
    std::optional<ToleranceProblem> tp;
    std::optional<ToleranceResult> tr;
    double tms = 0;
    if (tolerance_run && r.feasible) {
        tp.emplace();
        tp->blend = r.blend;
        tp->blend.name = recipe.blend.name + " (fitted)";
        tp->ellipse = tolerance_ellipse(p.target);
        tp->steps = vm.count("steps") ? steps : (p.target.ellipse ? p.target.ellipse_steps : kAnsiC78376Steps);
        // Sigmas per component of the fitted recipe (components at zero are left out of it).
        auto fitted = [&](const std::vector<double>& v) {
            if (v.size() == 1) return v;
            std::vector<double> out;
            for (std::size_t i = 0; i < v.size(); ++i)
                if (r.mass_fractions[i] > 0) out.push_back(v[i]);
            return out;
        };
        tp->weighing_sigma = fitted(settings.weighing_sigma);
        tp->weighing_relative = settings.weighing_relative;
        tp->peak_sigma_nm = fitted(settings.peak_sigma_nm);
        tp->qe_sigma = fitted(settings.qe_sigma);
        tp->d50_sigma = fitted(settings.d50_sigma);
        tp->absorption_sigma = fitted(settings.absorption_sigma);
        tp->coating_weight_sigma_mg_per_cm2 = settings.coating_weight_sigma_mg_per_cm2;
        tp->measurement_sigma_xy = settings.measurement_sigma_xy;
        tp->batch_size = settings.batch_size;
        tp->origins = settings.origins;
        tp->draws = static_cast<std::size_t>(draws);
        tp->seed = static_cast<std::uint64_t>(seed);
        const ToleranceProgress progress = terminal_progress("fit", "tolerance draws", 20000);
        const auto t1 = std::chrono::steady_clock::now();
        tr = naming_input(recipe.path, [&] { return run_tolerance(*tp, progress); }, "tolerance run: ");
        tms = std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - t1).count();
        if (f != Format::text)  // the text report lists them itself
            for (const auto& n : tr->notes) print_note("tolerance run: " + n);
        if (tr->failed > 0)
            print_warning(fmt::format("tolerance run: {} of {} draws gave no light (every QE drawn at zero or below) and no chromaticity: "
                                      "they count as outside the ellipse and are left out of the means, sds and percentiles",
                                      tr->failed, tr->draws));
    }
    for (const auto& w : r.result.assessment.warnings) print_warning(fmt::format("{}: {}", r.result.name, w));

    switch (f) {
        case Format::text:
            if (subsets) std::cout << subsets_text(*subsets, n_components);
            std::cout << fit_text(p, r, ms);
            if (vm.count("sensitivity")) std::cout << sensitivity_text(fraction_sensitivity(r.blend));
            if (tr) std::cout << tolerance_text(*tp, *tr, tms, tolerance_ellipse_source(p.target));
            break;
        case Format::csv: {
            const auto [cols, vals] = fit_csv(p, r, tr ? &*tr : nullptr, tolerance_run);
            std::cout << csv_line(cols) << '\n' << csv_line(vals) << '\n';
            break;
        }
        case Format::json: {
            auto j = fit_json(p, r, ms);
            if (subsets) j["subsets"] = subsets_json(*subsets);
            if (tr) j["tolerance"] = tolerance_json(*tp, *tr, tms, tolerance_ellipse_source(p.target));
            std::cout << dump_json(j) << '\n';
            break;
        }
    }
    if (!r.feasible) throw InputError(recipe.path, 0, "target " + p.target.description + ": " + r.message);
    if (!recipe_out.empty()) {
        BlendInput b = r.blend;
        b.name = recipe.blend.name + " (fitted)";
        write_output_or_throw(recipe_out, recipe_to_toml(b, {fmt::format("Fitted by lampwright fit from {}: target {}; {}.", recipe.path,
                                                                         p.target.description, fit_objective_name(p.objective))}));
    }
    return kExitOk;
}

}  // namespace lampwright::cli
