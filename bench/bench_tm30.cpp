// Throughput of the full CIE 224:2017 / ANSI/IES TM-30-20 figures (Rf, Rg, every hue bin, Rf of
// every CES) per 1 nm spectrum, and of assess with Ra and TM-30 together.
// Goals (issue 13): TM-30 >= 30,000 spectra/s on one core; assess with both >= 25,000 spectra/s.
#include "lampwright/colour/assessment.hpp"
#include "lampwright/colour/cie_tables.hpp"
#include "lampwright/colour/colour_fidelity.hpp"
#include "lampwright/colour/illuminants.hpp"
#include "lampwright/colour/temperature.hpp"

#include <benchmark/benchmark.h>

#include <vector>

namespace {

struct Prepared {
    lampwright::Spectrum spectrum;
    double cct_K;
};

std::vector<Prepared> prepared_spectra() {
    std::vector<Prepared> s;
    const auto add = [&s](const lampwright::Spectrum& x) {
        const auto c = lampwright::correlated_colour_temperature(lampwright::uv_1960(lampwright::tristimulus(x)));
        s.push_back({x, c.cct_K});
    };
    for (int n = 1; n <= 12; ++n) add(lampwright::cie_fl_illuminant(n));
    for (double t : {2700.0, 3000.0, 4000.0, 6500.0}) add(lampwright::planckian(t));
    return s;
}

// From the spectrum and its CCT: the 336 tristimulus sums over 380-780 nm, CIECAM02 + CAM02-UCS of
// the 99 CES under the test source, the tabulated reference, Rf, Rg and the 16 bins.
void BM_Tm30Full(benchmark::State& state) {
    const auto spectra = prepared_spectra();
    (void)lampwright::colour_fidelity(spectra[0].spectrum, spectra[0].cct_K);  // tables built outside the timed loop
    std::size_t i = 0;
    for (auto _ : state) {
        const auto& p = spectra[i++ % spectra.size()];
        auto f = lampwright::colour_fidelity(p.spectrum, p.cct_K);
        benchmark::DoNotOptimize(f);
    }
    state.SetItemsProcessed(static_cast<int64_t>(state.iterations()));
}
BENCHMARK(BM_Tm30Full);

// The first step alone: the 336 weighted sums over 401 wavelengths.
void BM_Cie224Sums(benchmark::State& state) {
    const auto spectra = prepared_spectra();
    std::vector<std::vector<double>> values;
    for (const auto& p : spectra) values.push_back(lampwright::cie224_range_values(p.spectrum));
    (void)lampwright::cie224_tristimuli(values[0].data());
    std::size_t i = 0;
    for (auto _ : state) {
        auto t = lampwright::cie224_tristimuli(values[i++ % values.size()].data());
        benchmark::DoNotOptimize(t);
    }
    state.SetItemsProcessed(static_cast<int64_t>(state.iterations()));
}
BENCHMARK(BM_Cie224Sums);

// assess with Ra and TM-30 (CCT included), without and with the spectral shape figures.
void BM_AssessWithTm30(benchmark::State& state) {
    const auto spectra = prepared_spectra();
    lampwright::AssessOptions opt;
    opt.spectral_features = state.range(0) != 0;
    (void)lampwright::assess(spectra[0].spectrum, opt);
    std::size_t i = 0;
    for (auto _ : state) {
        auto a = lampwright::assess(spectra[i++ % spectra.size()].spectrum, opt);
        benchmark::DoNotOptimize(a);
    }
    state.SetItemsProcessed(static_cast<int64_t>(state.iterations()));
}
BENCHMARK(BM_AssessWithTm30)->Arg(0)->Arg(1)->ArgName("with_shape_figures");

}  // namespace
