// Speed of the LED layer transport: one two-flux evaluation (what every fit step costs), the
// photon Monte Carlo per 10^5 photons, and a layer fit to 4000 K.
#include "lampwright/led/layer.hpp"
#include "lampwright/led/layer_design.hpp"
#include "lampwright/led/layer_fit.hpp"

#include <benchmark/benchmark.h>

#include <string>

namespace {

lampwright::LayerDesign example() {
    return lampwright::load_layer_design(std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/layers/module395_150um.toml");
}

void BM_LayerTwoFlux(benchmark::State& state) {
    const auto d = example();
    lampwright::AssessOptions o;
    o.spectral_features = false;
    (void)lampwright::evaluate_layer(d, std::nullopt, o);  // tables loaded outside the timed loop
    for (auto _ : state) benchmark::DoNotOptimize(lampwright::evaluate_layer(d, std::nullopt, o));
}

void BM_LayerMonteCarlo100k(benchmark::State& state) {
    const auto d = example();
    lampwright::AssessOptions o;
    o.spectral_features = false;
    lampwright::LayerSolver mc;
    mc.method = lampwright::LayerSolver::Method::monte_carlo;
    mc.photons = 100000;
    for (auto _ : state) benchmark::DoNotOptimize(lampwright::evaluate_layer(d, std::nullopt, o, 0, mc));
}

void BM_LayerFit4000K(benchmark::State& state) {
    lampwright::LayerFitProblem p;
    p.design = example();
    p.target = lampwright::target_cct(4000, 0.0);
    int evaluations = 0;
    for (auto _ : state) {
        auto r = lampwright::fit_layer(p);
        evaluations = r.evaluations;
        benchmark::DoNotOptimize(r);
    }
    state.counters["evaluations"] = evaluations;
}

}  // namespace

BENCHMARK(BM_LayerTwoFlux)->Unit(benchmark::kMillisecond);
BENCHMARK(BM_LayerMonteCarlo100k)->Unit(benchmark::kMillisecond);
BENCHMARK(BM_LayerFit4000K)->Unit(benchmark::kMillisecond);
