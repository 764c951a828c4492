// lampwright blend: the spectrum and figures of a phosphor blend recipe.
#include "cli_common.hpp"

#include "lampwright/report/assessment_report.hpp"
#include "lampwright/report/blend_report.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/io/spectrum_io.hpp"

#include <fmt/format.h>

#include <sstream>
#include <iostream>

namespace po = boost::program_options;

namespace lampwright::cli {

int run_blend(int argc, char** argv) {
    po::options_description opts(std::string(R"(Usage: lampwright blend [options] RECIPE.toml

Predicts the light of a phosphor blend: mass fractions -> shares of the absorbed excitation ->
emitted spectrum, then every figure of 'assess' plus per-phosphor shares, quantum yield, Stokes
efficiency, radiant efficiency and efficacy per W of absorbed excitation. See README, "Blend physics".

)") + kSafetyNotice + "\nOptions");
    std::string format = "text", spectrum_out, coating_sweep;
    std::vector<std::string> folders, recipes;
    opts.add_options()("help,h", "show this help")("format,f", po::value(&format), "text | csv | json (default text)")
        ("spectrum-out", po::value(&spectrum_out), "write the blend spectrum (W/nm per W absorbed) as wavelength_nm,value CSV")
        ("coating-sweep", po::value(&coating_sweep),
         "write the blend at coating weights 0.25-12 mg/cm2 (step 0.25) as CSV: UV absorbed, light out, efficacy per W of UV, colour")
        ("phosphors", po::value(&folders), "a folder of your own phosphor files (*.toml); repeatable");
    po::variables_map vm;
    if (!parse_command_line(argc, argv, opts, "recipe", &recipes, vm, "blend")) return kExitOk;
    const Format f = parse_format(format);
    if (recipes.size() != 1) throw UsageError{"blend: give exactly one recipe file (see lampwright blend --help)"};

    std::vector<FileRole> inputs{{recipes.front(), "the recipe"}};
    add_inputs(inputs, folders, "--phosphors folder");
    check_outputs_apart({{spectrum_out, "--spectrum-out"}, {coating_sweep, "--coating-sweep"}}, inputs);

    const Recipe recipe = load_recipe(recipes.front(), folders);
    for (const auto& n : recipe.notes) print_note(n);
    const BlendResult result = naming_input(recipe.path, [&] { return evaluate_blend(recipe.blend); });
    for (const auto& w : result.assessment.warnings) print_warning(fmt::format("{}: {}", result.name, w));
    if (!spectrum_out.empty()) {
        std::ostringstream out;
        write_spectrum_csv(out, result.spectrum, "value");
        write_output_or_throw(spectrum_out, out.str());
    }
    if (!coating_sweep.empty()) {
        if (recipe.blend.excitation.kind != Excitation::Kind::mercury)
            throw UsageError{"blend: --coating-sweep applies to a mercury-discharge recipe (an LED layer has its own design file)"};
        std::vector<double> weights;
        for (int k = 1; k <= 48; ++k) weights.push_back(0.25 * k);
        const auto sweep = naming_input(recipe.path, [&] { return coating_weight_sweep(recipe.blend, weights); });
        write_output_or_throw(coating_sweep, coating_sweep_csv(sweep));
    }
    switch (f) {
        case Format::text: std::cout << blend_text(result, recipe.blend); break;
        case Format::csv: {
            // CIE 224 Rf and TM-30 Rg after the blend's own columns (docs/output-schemas.md).
            auto cols = blend_columns(result);
            auto vals = blend_values(result);
            for (auto& c : fidelity_summary_columns()) cols.push_back(std::move(c));
            for (auto& v : fidelity_summary_values(result.assessment)) vals.push_back(std::move(v));
            std::cout << csv_line(cols) << '\n' << csv_line(vals) << '\n';
            break;
        }
        case Format::json: {
            std::cout << dump_json(blend_document_json(result, recipe.blend)) << '\n';
            break;
        }
    }
    return kExitOk;
}

}  // namespace lampwright::cli
