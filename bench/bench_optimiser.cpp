// Speed of blend fits (issue goal: a four-component fit <= 50 ms on one core).
#include "lampwright/design/optimiser.hpp"
#include "lampwright/phosphor/recipe.hpp"

#include <benchmark/benchmark.h>

#include <string>

namespace {

lampwright::FitProblem problem(const std::string& recipe, lampwright::FitObjective objective) {
    lampwright::FitProblem p;
    p.blend = lampwright::load_recipe(std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/recipes/" + recipe).blend;
    p.target = lampwright::target_cct(4000, 0.0);
    p.objective = objective;
    return p;
}

void run(benchmark::State& state, const std::string& recipe, lampwright::FitObjective objective) {
    const auto p = problem(recipe, objective);
    (void)lampwright::solve(p);  // tables loaded outside the timed loop
    int evaluations = 0;
    for (auto _ : state) {
        auto r = lampwright::solve(p);
        evaluations = r.evaluations;
        benchmark::DoNotOptimize(r);
    }
    state.counters["evaluations"] = evaluations;
}

void BM_Fit3Exact(benchmark::State& state) {
    const auto p = problem("triband_4000K.toml", lampwright::FitObjective::closest_to_start);
    lampwright::FitOptions o;
    o.method = lampwright::FitMethod::exact;
    (void)lampwright::solve(p, o);
    for (auto _ : state) benchmark::DoNotOptimize(lampwright::solve(p, o));
}
void BM_Fit3Ra(benchmark::State& state) { run(state, "triband_4000K.toml", lampwright::FitObjective::ra); }
void BM_Fit4Ra(benchmark::State& state) { run(state, "led395_module.toml", lampwright::FitObjective::ra); }
void BM_Fit5Ra(benchmark::State& state) { run(state, "multiband_5000K.toml", lampwright::FitObjective::ra); }

}  // namespace

BENCHMARK(BM_Fit3Exact)->Unit(benchmark::kMillisecond);
BENCHMARK(BM_Fit3Ra)->Unit(benchmark::kMillisecond);
BENCHMARK(BM_Fit4Ra)->Unit(benchmark::kMillisecond);
BENCHMARK(BM_Fit5Ra)->Unit(benchmark::kMillisecond);
