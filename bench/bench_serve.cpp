// The work of one slider move on the page of lampwright serve, without HTTP: evaluate the blend
// and build the whole answer (blend document, target, the three SVG drawings). Goal: well under
// the 50 ms a redraw may take (issue 16), so the page stays responsive on a slow machine.
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/report/serve_report.hpp"

#include <benchmark/benchmark.h>

#include <string>

namespace {

void BM_ServeEvaluation(benchmark::State& state) {
    const lampwright::Recipe r = lampwright::load_recipe(std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/recipes/triband_4000K.toml");
    const lampwright::Target t = lampwright::target_ansi_c78377(4000);
    lampwright::BlendInput b = r.blend;
    double w = 0.40;
    for (auto _ : state) {
        b.components[0].mass_fraction = w;  // a different blend each time, as a slider gives
        w = w > 0.5 ? 0.40 : w + 0.001;
        const auto result = lampwright::evaluate_blend(b);
        benchmark::DoNotOptimize(lampwright::serve_evaluation_json(b, result, t, lampwright::kDefaultFitToleranceUvPrime));
    }
}

}  // namespace

BENCHMARK(BM_ServeEvaluation)->Unit(benchmark::kMillisecond);
