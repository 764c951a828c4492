// QC of a large lot: 10,000 spectrum files read, assessed, judged, summarised and reported (HTML),
// on all cores. Goal: <= 5 s on the 2-core machine (issue: lamp-batch QC).
#include "lampwright/production/qc.hpp"
#include "lampwright/report/qc_report.hpp"

#include <benchmark/benchmark.h>
#include <fmt/format.h>

#include <filesystem>
#include <fstream>
#include <random>
#include <unistd.h>

namespace fs = std::filesystem;

namespace {

// Copies the 40 demo lamps into `count` files with a little extra noise (invented demo data).
fs::path make_lot(std::size_t count) {
    const fs::path dir = fs::temp_directory_path() / fmt::format("lampwright_bench_lot_{}", ::getpid());
    fs::remove_all(dir);
    fs::create_directories(dir);
    std::vector<std::vector<std::pair<int, double>>> demo;
    for (int i = 1; i <= 40; ++i) {
        std::ifstream in(fmt::format("{}/examples/qc/lot_A/lamp_{:02d}.csv", LAMPWRIGHT_SOURCE_DIR, i));
        std::vector<std::pair<int, double>> rows;
        std::string line;
        while (std::getline(in, line))
            if (!line.empty() && std::isdigit(static_cast<unsigned char>(line[0]))) {
                const auto comma = line.find(',');
                rows.emplace_back(std::stoi(line.substr(0, comma)), std::stod(line.substr(comma + 1)));
            }
        demo.push_back(rows);
    }
    std::mt19937 rng(1);
    std::normal_distribution<double> noise(1.0, 0.002);
    for (std::size_t n = 0; n < count; ++n) {
        std::ofstream out(dir / fmt::format("lamp_{:05d}.csv", n));
        out << "wavelength_nm,W_per_nm\n";
        for (const auto& [nm, v] : demo[n % demo.size()]) out << nm << ',' << fmt::format("{:.6g}", v * noise(rng)) << '\n';
    }
    return dir;
}

void BM_QcLot(benchmark::State& state) {
    const auto count = static_cast<std::size_t>(state.range(0));
    const fs::path dir = make_lot(count);
    const lampwright::QcSpec spec = lampwright::load_qc_spec(LAMPWRIGHT_SOURCE_DIR "/examples/qc/spec_F4100.toml");
    for (auto _ : state) {
        const lampwright::QcRun run = lampwright::run_qc(spec, {dir.string()});
        const std::string html = lampwright::qc_html_report(run);
        benchmark::DoNotOptimize(html.size());
        if (run.lamps.size() != count) state.SkipWithError("not every lamp was read");
    }
    state.SetItemsProcessed(static_cast<int64_t>(state.iterations() * count));
    fs::remove_all(dir);
}
BENCHMARK(BM_QcLot)->Arg(10000)->Unit(benchmark::kMillisecond)->UseRealTime()->Iterations(3);

}  // namespace
