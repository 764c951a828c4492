// Reading a large IES TM-27-14 spectral XML document: 100,000 <SpectralData> elements (380-780 nm
// in 0.004 nm steps). Reading must grow linearly with the size of the file (issue: crashes and
// hangs; it was quadratic, 13 s for 40,000 points).
#include "lampwright/io/spectrum_io.hpp"

#include <benchmark/benchmark.h>
#include <fmt/format.h>

#include <string>

namespace {

std::string tm27_document(int points) {
    std::string xml = "<?xml version=\"1.0\"?>\n<IESTM2714 xmlns=\"iestm2714\">\n<SpectralDistribution>\n";
    for (int k = 0; k < points; ++k)
        xml += fmt::format("<SpectralData wavelength=\"{:.3f}\">{}</SpectralData>\n", 380.0 + 400.0 * k / (points - 1), 1 + k % 7);
    return xml + "</SpectralDistribution>\n</IESTM2714>\n";
}

void BM_ReadTm27(benchmark::State& state) {
    const std::string xml = tm27_document(static_cast<int>(state.range(0)));
    for (auto _ : state) benchmark::DoNotOptimize(lampwright::parse_tm27_xml(xml, "bench.xml", "bench"));
    state.SetComplexityN(state.range(0));
}

}  // namespace

BENCHMARK(BM_ReadTm27)->Arg(10000)->Arg(40000)->Arg(100000)->Unit(benchmark::kMillisecond)->Complexity(benchmark::oN);
