// Speed of the trade-off front and the production tolerance Monte Carlo (issue goals on one core:
// a 30-point front <= 2 s; 100,000 tolerance draws <= 1 s).
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/design/tolerance.hpp"
#include "lampwright/design/tradeoff.hpp"

#include <benchmark/benchmark.h>

#include <filesystem>
#include <fstream>
#include <string>
#include <unistd.h>

namespace {

lampwright::BlendInput recipe(const std::string& name) {
    return lampwright::load_recipe(std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/recipes/" + name).blend;
}

// Four mercury-excited components at 4000 K: a real trade-off, Ra about 81 to 85. (The
// 4-component LED recipe has its best Ra and best efficacy at one blend: a degenerate front.)
void BM_Front30RaEfficacy(benchmark::State& state, const std::string& name) {
    lampwright::FitProblem p;
    p.blend = recipe(name);
    p.target = lampwright::target_cct(4000, 0.0);
    (void)lampwright::solve(p);  // tables loaded outside the timed loop
    int solves = 0, evaluations = 0;
    for (auto _ : state) {
        auto f = lampwright::tradeoff_front(p, lampwright::FrontKind::ra_efficacy, 30);
        solves = f.solves;
        evaluations = f.evaluations;
        benchmark::DoNotOptimize(f);
    }
    state.counters["solves"] = solves;
    state.counters["evaluations"] = evaluations;
}

// The whole run: the precomputed tables (per component, 0.25 nm shifts; the coating-weight table) and the draws.
void BM_Tolerance(benchmark::State& state, const std::string& name, std::size_t draws) {
    lampwright::ToleranceProblem t;
    t.blend = recipe(name);
    // The ellipse round the recipe's own chromaticity (the nearest ANSI C78.376 one-step ellipse).
    const auto xy = lampwright::evaluate_blend(t.blend).assessment.xy;
    t.ellipse = lampwright::tolerance_ellipse(lampwright::target_xy(xy.x, xy.y));
    // Every source of variation at its default (kToleranceSources), in batches.
    auto dflt = [](const char* key) { return lampwright::tolerance_source(key).default_value; };
    t.weighing_sigma = {dflt("weighing_sigma")};
    t.peak_sigma_nm = {dflt("peak_sigma_nm")};
    t.qe_sigma = {dflt("qe_sigma")};
    t.d50_sigma = {dflt("d50_sigma")};
    t.absorption_sigma = {dflt("absorption_sigma")};
    t.coating_weight_sigma_mg_per_cm2 = dflt("coating_weight_sigma_mg_per_cm2");
    t.measurement_sigma_xy = dflt("measurement_sigma_xy");
    t.batch_size = static_cast<std::size_t>(dflt("batch_size"));
    t.draws = draws;
    t.seed = 1;
    (void)lampwright::run_tolerance(t);
    double yield = 0;
    for (auto _ : state) {
        auto r = lampwright::run_tolerance(t);
        yield = r.yield;
        benchmark::DoNotOptimize(r);
    }
    state.counters["yield"] = yield;
}

// `fit --choose 4` of eight mercury-excited components at 4000 K on the locus (70 subsets, each
// solved for the target closest to the recipe's fractions). Goal: <= 100 ms (issue 15).
void BM_Choose4Of8(benchmark::State& state) {
    const auto path = std::filesystem::temp_directory_path() / ("lampwright_bench_choose_" + std::to_string(::getpid()) + ".toml");
    {
        // Invented demo recipe of the library's lamp phosphors, equal fractions.
        std::ofstream f(path);
        f << "name = \"eight components (bench)\"\nexcitation_nm = 253.7\n";
        for (const char* id : {"BAM", "SCA", "SAE", "BAM-green", "LAP", "YOX", "CBM", "MFG"})
            f << "[[component]]\nphosphor = \"" << id << "\"\nmass_fraction = 0.125\n";
    }
    lampwright::FitProblem p;
    p.blend = lampwright::load_recipe(path.string()).blend;
    std::filesystem::remove(path);
    p.target = lampwright::target_cct(4000, 0.0);
    (void)lampwright::solve(p);  // tables loaded outside the timed loop
    std::size_t feasible = 0;
    for (auto _ : state) {
        auto c = lampwright::choose_components(p, 4, {});
        feasible = 0;
        for (const auto& t : c.trials) feasible += t.feasible ? 1 : 0;
        benchmark::DoNotOptimize(c);
    }
    state.counters["feasible_subsets"] = static_cast<double>(feasible);
}

}  // namespace

BENCHMARK(BM_Choose4Of8)->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(BM_Front30RaEfficacy, multiband_4_components, std::string("multiband_5000K.toml"))->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(BM_Front30RaEfficacy, led395_4_components, std::string("led395_module.toml"))->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(BM_Tolerance, led395_4_components_100k, std::string("led395_module.toml"), 100000)->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(BM_Tolerance, multiband_4_components_100k, std::string("multiband_5000K.toml"), 100000)->Unit(benchmark::kMillisecond);
// One draw: the cost of the precomputed table alone.
BENCHMARK_CAPTURE(BM_Tolerance, led395_4_components_table_only, std::string("led395_module.toml"), 1)->Unit(benchmark::kMillisecond);
