// lampwright layer: the light of a phosphor conversion layer on an LED pump.
#include "cli_common.hpp"

#include "lampwright/report/assessment_report.hpp"
#include "lampwright/led/layer_design.hpp"
#include "lampwright/report/layer_report.hpp"
#include "lampwright/io/spectrum_io.hpp"

#include <fmt/format.h>

#include <sstream>
#include <iostream>

namespace po = boost::program_options;

namespace lampwright::cli {

int run_layer(int argc, char** argv) {
    po::options_description opts(std::string(R"(Usage: lampwright layer [options] DESIGN.toml

Models a phosphor conversion layer on a near-UV, violet or blue LED (360-470 nm): absorption and scattering by the grains,
Fresnel reflection and total internal reflection at the top, the package reflector below,
conversion and re-absorption between phosphors (a two-flux model solved as one linear system, or
a photon Monte Carlo with --method monte-carlo), a flat top or a dome, chip absorption, thermal
quenching and peak shift, the pump's shift and broadening with junction temperature. Prints the
output at 25 degC and at the operating temperature, the colour shift between them in MacAdam
steps, pump leakage, conversion efficiency, the energy and photon balance, and every 'assess'
figure. See README, "LED layer physics".

UV and violet leakage is a photobiological hazard: assess products to IEC 62471 and follow
local codes and licensed practice.

)") + "Options");
    std::string format = "text", spectrum_out, method = "two-flux";
    std::int64_t photons = 200000;
    std::uint64_t seed = 1;
    std::vector<std::string> folders, designs;
    opts.add_options()("help,h", "show this help")("format,f", po::value(&format), "text | csv | json (default text)")
        ("method", po::value(&method), "two-flux (default, fast) | monte-carlo (photon Monte Carlo, the reference)")
        ("photons", po::value(&photons), "Monte Carlo: pump photons launched (default 200000)")
        ("seed", po::value(&seed), "Monte Carlo: random seed (default 1; the same seed gives the same result)")
        ("spectrum-out", po::value(&spectrum_out), "write the output spectrum (W/nm at the operating temperature) as CSV")
        ("phosphors", po::value(&folders), "a folder of your own phosphor files (*.toml); repeatable");
    po::variables_map vm;
    if (!parse_command_line(argc, argv, opts, "design", &designs, vm, "layer")) return kExitOk;
    const Format f = parse_format(format);
    if (designs.size() != 1) throw UsageError{"layer: give exactly one design file (see lampwright layer --help)"};
    LayerSolver solver;
    if (method == "monte-carlo") {
        solver.method = LayerSolver::Method::monte_carlo;
    } else if (method != "two-flux") {
        throw UsageError{fmt::format("layer: --method must be two-flux or monte-carlo, not '{}'", method)};
    }
    if (vm.count("photons") && solver.method != LayerSolver::Method::monte_carlo) throw UsageError{"layer: --photons needs --method monte-carlo"};
    if (photons < 1000 || photons > 1000000000) throw UsageError{fmt::format("layer: --photons must lie in 1000..1000000000, not {}", photons)};
    solver.photons = photons;
    solver.seed = seed;

    std::vector<FileRole> inputs{{designs.front(), "the layer design"}};
    add_inputs(inputs, folders, "--phosphors folder");
    check_outputs_apart({{spectrum_out, "--spectrum-out"}}, inputs);

    const LayerDesign design = load_layer_design(designs.front(), folders);
    const LayerEvaluation rep = naming_input(designs.front(), [&] { return evaluate_layer_design(design, {}, solver); });
    for (const auto& w : rep.operating.assessment.warnings) print_warning(fmt::format("{}: {}", design.name, w));
    const std::string caution = layer_caution(rep);
    if (!caution.empty() && f != Format::text) print_warning("CAUTION: " + caution);
    if (!spectrum_out.empty()) {
        std::ostringstream out;
        write_spectrum_csv(out, rep.operating.spectrum, "value");
        write_output_or_throw(spectrum_out, out.str());
    }
    switch (f) {
        case Format::text: std::cout << layer_text(rep); break;
        case Format::csv: {
            // CIE 224 Rf and TM-30 Rg after the layer's own columns (docs/output-schemas.md).
            auto cols = layer_columns();
            auto vals = layer_values(rep);
            for (auto& c : fidelity_summary_columns()) cols.push_back(std::move(c));
            for (auto& v : fidelity_summary_values(rep.operating.assessment)) vals.push_back(std::move(v));
            for (auto& c : layer_package_columns()) cols.push_back(std::move(c));
            for (auto& v : layer_package_values(rep)) vals.push_back(std::move(v));
            std::cout << csv_line(cols) << '\n' << csv_line(vals) << '\n';
            break;
        }
        case Format::json: {
            std::cout << dump_json(layer_document_json(rep)) << '\n';
            break;
        }
    }
    return kExitOk;
}

}  // namespace lampwright::cli
