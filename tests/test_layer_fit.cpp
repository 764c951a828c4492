// Fitting LED layer loadings (and thickness) to a target white.
#include "lampwright/led/layer_design.hpp"
#include "lampwright/led/layer_fit.hpp"
#include "lampwright/led/layer_tolerance.hpp"
#include "lampwright/report/fit_report.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/design/tolerance.hpp"

#include "test_support.hpp"

#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

#include <cmath>
#include <sstream>

using namespace lampwright;
using lwtest::quote;
using lwtest::run_cli;
using lwtest::TempDir;

TEST_CASE("layer fit: loadings put the operating-temperature light on a 4000 K target") {
    // Target: 4000 K on the Planckian locus (CIE 15:2004 CCT definition, Duv 0).
    LayerFitProblem p;
    p.design = load_layer_design(LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_150um.toml");
    p.target = target_cct(4000, 0.0);
    p.objective = FitObjective::closest_to_start;
    const LayerFitResult r = fit_layer(p);
    REQUIRE(r.feasible);
    // Re-check independently with the layer model (the constraint of the problem; common practice, no source).
    const LayerEvaluation rep = evaluate_layer_design(r.design);
    const UV uv = rep.operating.assessment.uv_prime, t = uv_1976_from_xy(p.target.xy);
    CHECK(std::hypot(uv.u - t.u, uv.v - t.v) <= kDefaultFitToleranceUvPrime * 1.001);
    CHECK(rep.operating.assessment.cct.cct_K == doctest::Approx(4000).epsilon(0.02));
    double total = 0;
    for (const auto& c : r.design.components) {
        CHECK(c.loading > 0);
        total += c.loading;
    }
    CHECK(total <= p.max_total_loading);
}

TEST_CASE("layer fit: maximising Ra does no worse than the closest fit and keeps the tolerance") {
    // A maximiser over a set that contains the closest fit cannot end below it (common practice, no source).
    LayerFitProblem p;
    p.design = load_layer_design(LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_150um.toml");
    p.target = target_cct(4000, 0.0);
    const LayerFitResult closest = fit_layer(p);
    p.objective = FitObjective::ra;
    const LayerFitResult best = fit_layer(p);
    REQUIRE(closest.feasible);
    REQUIRE(best.feasible);
    CHECK(best.evaluation.operating.assessment.rendering->ra >= closest.evaluation.operating.assessment.rendering->ra - 0.05);
    CHECK(best.distance_uv_prime <= kDefaultFitToleranceUvPrime * 1.001);
}

TEST_CASE("layer fit: a lamp-colour target is met inside its MacAdam ellipse") {
    // ANSI C78.376 F4100 with its 4-step ellipse (centre and ellipse from memory, data/targets);
    // the constraint is the ellipse, not the u'v' circle (as for blend fits).
    LayerFitProblem p;
    p.design = load_layer_design(LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_150um.toml");
    p.target = target_ansi_c78376("F4100", 4.0);
    const LayerFitResult r = fit_layer(p);
    REQUIRE(r.feasible);
    REQUIRE(r.macadam_steps.has_value());
    const double steps = macadam_steps(*p.target.ellipse, evaluate_layer_design(r.design).operating.assessment.xy);
    CHECK(steps <= 4.0 * 1.001);
    CHECK(steps == doctest::Approx(*r.macadam_steps).epsilon(1e-9));
}

TEST_CASE("layer fit: an unreachable target is reported, not faked") {
    // Project contract: an impossible target is an error, never a wrong answer (common practice, no source).
    LayerFitProblem p;
    p.design = load_layer_design(LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_150um.toml");
    p.target = target_xy(0.15, 0.70);  // deep green, outside what blue + green + red nitride reach with a violet pump leak
    const LayerFitResult r = fit_layer(p, 800);
    CHECK_FALSE(r.feasible);
    CHECK(r.message.find("no feasible layer") != std::string::npos);
}

TEST_CASE("layer fit: the fit command on a design writes a design that layer reproduces") {
    // Round trip of the CLI output against the library (common practice, no source).
    const TempDir dir;
    const std::string out = dir.file("lampwright_fitted_layer.toml");
    const auto fit = run_cli("fit " + quote(LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_150um.toml") + " --cct 4000 --format csv --recipe-out " + quote(out));
    REQUIRE(fit.exit_code == 0);
    const LayerEvaluation rep = evaluate_layer_design(load_layer_design(out));
    const UV uv = rep.operating.assessment.uv_prime, t = uv_1976_from_xy(target_cct(4000, 0).xy);
    CHECK(std::hypot(uv.u - t.u, uv.v - t.v) <= kDefaultFitToleranceUvPrime * 1.001);  // the problem's own constraint
    std::istringstream in(fit.out);
    std::string header;
    std::getline(in, header);
    CHECK(header.find("pump_leak_fraction") != std::string::npos);
    CHECK(header.find("fit_loading_") != std::string::npos);
}

TEST_CASE("layer fit: min_loading and max_loading of a component bound its fitted loading") {
    // The example is fitted to 4000 K with BAM at 0.12; with BAM held to at least 0.13 the fit must
    // move the others, not BAM below its limit.
    LayerFitProblem p;
    p.design = load_layer_design(LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_150um.toml");
    p.design.components[0].min_loading = 0.13;
    p.design.components[2].max_loading = 0.06;
    p.target = target_cct(4000, 0.0);
    const LayerFitResult r = fit_layer(p);
    CAPTURE(r.message);
    CHECK(r.feasible);
    CHECK(r.design.components[0].loading >= 0.13 - 1e-6);
    CHECK(r.design.components[2].loading <= 0.06 + 1e-6);
    // The limits are listed among the constraints.
    int listed = 0;
    for (const auto& c : r.constraints)
        if (c.name.find("loading of") != std::string::npos) ++listed;
    CHECK(listed == 2);
}

namespace {

LayerToleranceProblem module_run(std::size_t draws) {
    LayerToleranceProblem t;
    t.design = load_layer_design(LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_150um.toml");
    const Chromaticity xy = evaluate_layer_design(t.design).operating.assessment.xy;
    t.ellipse = tolerance_ellipse(target_xy(xy.x, xy.y));
    t.draws = draws;
    t.seed = 3;
    return t;
}

}  // namespace

TEST_CASE("layer tolerance: no variation gives the nominal module; measurement alone gives its own sd; more loading spread, more steps") {
    // Definitions of mean and sample sd (common practice, no source): with every sigma zero each
    // module is the design; with only the measurement error, x and y of the modules scatter by
    // that sigma (sample sd of N normal values within 4 standard errors, sigma / sqrt(2 (N - 1))).
    LayerToleranceProblem none = module_run(20);
    none.loading_sigma = none.thickness_sigma = none.d50_sigma = none.measurement_sigma_xy = 0;
    const LayerToleranceResult z = run_layer_tolerance(none);
    CHECK(z.sd_steps < 1e-12);
    CHECK(z.mean_steps == doctest::Approx(z.nominal_steps).epsilon(1e-12));
    CHECK(z.inside == 20);  // the design sits on its own target
    CHECK(z.failed == 0);

    LayerToleranceProblem meas = none;
    meas.draws = 300;
    meas.measurement_sigma_xy = 0.002;
    const LayerToleranceResult m = run_layer_tolerance(meas);
    const double se = 0.002 / std::sqrt(2.0 * 299);
    CHECK(std::abs(m.sd_x - 0.002) < 4 * se);
    CHECK(std::abs(m.sd_y - 0.002) < 4 * se);

    LayerToleranceProblem a = module_run(200), b = module_run(200);
    b.loading_sigma = 3 * a.loading_sigma;
    const LayerToleranceResult ra = run_layer_tolerance(a), rb = run_layer_tolerance(b);
    CHECK(rb.sd_x > ra.sd_x);
    CHECK(rb.mean_steps > ra.mean_steps);
    CHECK(rb.yield <= ra.yield);
    // Same seed, same modules (std::mt19937_64 is fixed by the C++ standard; one library here).
    const LayerToleranceResult again = run_layer_tolerance(a);
    CHECK(again.mean_steps == ra.mean_steps);
    CHECK(again.inside == ra.inside);
    LayerToleranceProblem bad = a;
    bad.thickness_sigma = -0.1;
    CHECK_THROWS_AS(run_layer_tolerance(bad), Error);
}

TEST_CASE("layer sensitivity: central differences are linear in the step and the thickness row is there") {
    // A smooth model: the 1 % and 2 % central differences agree to first order (the 2 % one is
    // twice the 1 % one within 5 %; Taylor's theorem, common practice, no source).
    const LayerDesign d = load_layer_design(LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_150um.toml");
    const auto one = layer_sensitivity(d, 0.01), two = layer_sensitivity(d, 0.02);
    REQUIRE(one.size() == d.components.size() + 1);
    CHECK(one.back().label == "thickness");
    CHECK(one.back().mass_fraction == d.thickness_um);
    for (std::size_t i = 0; i < one.size(); ++i) {
        CAPTURE(one[i].label);
        CHECK(two[i].d_u_prime == doctest::Approx(2 * one[i].d_u_prime).epsilon(0.05));
        CHECK(two[i].d_v_prime == doctest::Approx(2 * one[i].d_v_prime).epsilon(0.05));
    }
    // Thicker layer: less pump leaks, so the colour moves away from the violet pump (v' rises).
    CHECK(one.back().d_v_prime > 0);
}

TEST_CASE("layer choose: the best 2 of 3 components is at least as good as each pair fitted alone, and k = n is the plain fit") {
    // The best of a set is no worse than any member; a subset of all components is the plain fit
    // (definitions; common practice, no source).
    LayerFitProblem p;
    p.design = load_layer_design(LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_150um.toml");
    p.target = target_cct(4000, 0.0);
    // The default objective (smallest change of the loadings) and a small evaluation budget keep
    // the six fits quick; the comparison holds for any budget (the best is the maximum of the trials).
    constexpr int kBudget = 300;
    const LayerSubsetChoice all = choose_layer_components(p, 3, kBudget);
    REQUIRE(all.found);
    CHECK(all.trials.size() == 1);
    CHECK(all.result.objective_value == doctest::Approx(fit_layer(p, kBudget).objective_value).epsilon(1e-9));
    const LayerSubsetChoice two = choose_layer_components(p, 2, kBudget);
    CHECK(two.trials.size() == 3);
    for (const auto& t : two.trials)
        if (t.feasible) CHECK(two.result.objective_value >= t.objective_value);
    CHECK_THROWS_AS(choose_layer_components(p, 4), Error);
}

TEST_CASE("fit command on a layer design: --tolerance-run, --sensitivity, --choose and their usage errors") {
    const std::string d = quote(LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_150um.toml");
    const auto j = run_cli("fit " + d + " --cct 4000 --tolerance-run --draws 40 -f json");
    REQUIRE(j.exit_code == 0);
    const auto tj = nlohmann::json::parse(j.out).at("tolerance");
    CHECK(tj.at("draws") == 40);
    CHECK(tj.at("loading_sigma").get<double>() == layer_tolerance_default("loading_sigma"));
    const auto csv = run_cli("fit " + d + " --cct 4000 --tolerance-run --draws 40 -f csv");
    REQUIRE(csv.exit_code == 0);
    CHECK(csv.out.find("tol_inside_share") != std::string::npos);
    const auto text = run_cli("fit " + d + " --cct 4000 --sensitivity --choose 3");  // one subset: the plain fit
    REQUIRE(text.exit_code == 0);
    CHECK(text.out.find("thickness") != std::string::npos);
    CHECK(text.out.find("Best 3 of 3 components") != std::string::npos);
    auto rc = [&](const std::string& args) { return run_cli("fit " + d + " --cct 4000 " + args).exit_code; };
    CHECK(rc("--tolerance-run --weighing-sigma 0.01") == 2);  // a blend-recipe source
    CHECK(rc("--loading-sigma 0.02") == 2);                   // needs --tolerance-run
    CHECK(rc("--tolerance-run --loading-sigma 0.9") == 2);    // above 0.5
    CHECK(rc("--tolerance-run --d50-sigma 0.01,0.02") == 2);  // one value for a layer
    CHECK(run_cli("fit " + quote(LAMPWRIGHT_SOURCE_DIR "/examples/recipes/triband_4000K.toml") + " --cct 4000 --tolerance-run --loading-sigma 0.02")
              .exit_code == 2);
}

TEST_CASE("layer front: the efficacy-Ra front of a layer design is monotone and every point meets its floor on the layer model") {
    // The epsilon-constraint sweep (Haimes, Lasdon and Wismer 1971) on fit_layer: a higher Ra floor
    // cannot raise the best efficacy; each point's loadings, evaluated again by the layer model,
    // meet its floor and the chromaticity tolerance (common practice, no source).
    LayerFitProblem p;
    p.design = load_layer_design(LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_150um.toml");
    p.target = target_cct(4000, 0.0);
    // A small evaluation budget per fit keeps the five fits of the sweep quick; the properties
    // checked hold for any budget (the sweep keeps the best feasible answer at every floor).
    const TradeoffFront f = layer_tradeoff_front(p, FrontKind::ra_efficacy, 3, 150);
    REQUIRE(f.points.size() == 3);
    CHECK(f.amount == "loading");
    CHECK(f.labels.size() == p.design.components.size());
    for (std::size_t k = 0; k < f.points.size(); ++k) {
        const auto& pt = f.points[k];
        CAPTURE(pt.floor);
        REQUIRE(pt.feasible);
        if (k > 0) CHECK(pt.objective <= f.points[k - 1].objective + 1e-9);
        LayerDesign d = p.design;
        for (std::size_t i = 0; i < d.components.size(); ++i) d.components[i].loading = pt.mass_fractions[i];
        const LayerEvaluation e = evaluate_layer_design(d);
        REQUIRE(e.operating.assessment.rendering);
        CHECK(e.operating.assessment.rendering->ra >= pt.floor - 1e-6);
        CHECK(e.operating.efficacy_lm_per_W_pump == doctest::Approx(pt.objective).epsilon(1e-9));
        CHECK(lwtest::duv_prime(e.operating.assessment, p.target.xy) <= p.tolerance_uv_prime * 1.001);
    }
    CHECK_THROWS_AS(layer_tradeoff_front(p, FrontKind::rf_efficacy, 3), Error);
    // The CSV the fit command writes (--front-csv): loadings and the efficacy per W of pump.
    const std::string header = lwtest::text_lines(front_csv(f)).front();
    CHECK(header.rfind("min_Ra,feasible,objective_efficacy", 0) == 0);
    CHECK(header.find("efficacy_lm_per_W_pump") != std::string::npos);
    CHECK(header.find("loading_BaMgAl10O17:Eu2+") != std::string::npos);
}

TEST_CASE("fit command on a layer design: --front usage errors") {
    // A full layer front takes a fit per point (seconds each): the sweep itself is checked above
    // on the library; here only what the command refuses.
    const std::string d = quote(LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_150um.toml");
    CHECK(run_cli("fit " + d + " --cct 4000 --front rf-efficacy --points 2").exit_code == 2);
    CHECK(run_cli("fit " + d + " --cct 4000 --front ra-efficacy --min-ra 80").exit_code == 2);
    CHECK(run_cli("fit " + d + " --cct 4000 --front ra-efficacy --tolerance-run").exit_code == 2);
}
