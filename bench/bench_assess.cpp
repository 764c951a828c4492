// Throughput of the assess figures (xy, u'v', CCT, Duv, Ra, R1-R14, LER) on 1 nm spectra, without
// CIE 224 / TM-30 (bench_tm30.cpp measures assess with them).
#include "lampwright/colour/assessment.hpp"
#include "lampwright/colour/cie_tables.hpp"
#include "lampwright/colour/illuminants.hpp"

#include <benchmark/benchmark.h>

#include <vector>

namespace {

std::vector<lampwright::Spectrum> sample_spectra() {
    std::vector<lampwright::Spectrum> s;
    for (int n = 1; n <= 12; ++n) s.push_back(lampwright::cie_fl_illuminant(n));
    for (double t : {2700.0, 3000.0, 4000.0}) s.push_back(lampwright::planckian(t));
    return s;
}

void BM_AssessFull(benchmark::State& state) {
    const auto spectra = sample_spectra();
    lampwright::AssessOptions opt;
    opt.spectral_features = state.range(0) != 0;
    opt.colour_fidelity = false;
    (void)lampwright::assess(spectra[0], opt);  // load tables outside the timed loop
    std::size_t i = 0;
    for (auto _ : state) {
        auto a = lampwright::assess(spectra[i++ % spectra.size()], opt);
        benchmark::DoNotOptimize(a);
    }
    state.SetItemsProcessed(static_cast<int64_t>(state.iterations()));
}
BENCHMARK(BM_AssessFull)->Arg(0)->Arg(1)->ArgName("with_shape_figures");

}  // namespace
