// lampwright compare: layer designs, blend recipes and measured spectra side by side.
#include "cli_common.hpp"

#include "lampwright/report/assessment_report.hpp"
#include "lampwright/report/comparison_report.hpp"
#include "lampwright/core/interpolation.hpp"
#include "lampwright/led/layer_design.hpp"
#include "lampwright/report/layer_report.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/io/spectrum_io.hpp"
#include "lampwright/report/svg_plot.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <iostream>

namespace po = boost::program_options;

namespace lampwright::cli {

namespace {

std::vector<ComparisonEntry> load_entries(const std::string& path, const std::vector<std::string>& folders) {
    const auto ext = std::filesystem::path(path).extension().string();
    if (ext == ".toml") {
        const TomlDoc doc = TomlDoc::from_file(path);
        if (is_layer_design(doc)) {
            const LayerEvaluation rep = evaluate_layer_design(layer_design_from_toml(doc, folders));
            ComparisonEntry e{rep.design.name, "layer", rep.operating.spectrum, rep.operating.assessment, rep.operating.converted_efficiency,
                              rep.operating.pump_leak_fraction, rep.operating.efficacy_lm_per_W_pump, layer_caution(rep)};
            e.pump_peak_nm = rep.design.pump.peak_nm;
            e.thickness_um = rep.design.thickness_um;
            e.operating_temperature_C = rep.design.temperature_C;
            e.shift_steps = rep.shift_steps;
            return {e};
        }
        const Recipe recipe = recipe_from_toml(doc, folders);
        const BlendResult b = evaluate_blend(recipe.blend);
        return {{b.name, "blend", b.spectrum, b.assessment, b.radiant_efficiency, NAN, b.luminous_efficacy_absorbed, ""}};
    }
    std::vector<ComparisonEntry> out;
    for (const auto& s : read_spectrum_file(path).spectra) {
        const Spectrum one = resample_to_1nm(s);
        out.push_back({s.name, "spectrum", one, assess_sampled(s), NAN, NAN, NAN, ""});
    }
    return out;
}

}  // namespace

int run_compare(int argc, char** argv) {
    po::options_description opts(R"(Usage: lampwright compare [options] FILE...

Side-by-side figures of LED layer designs (TOML with [layer]), blend recipes (other TOML) and
measured spectra (CSV): chromaticity, CCT, Duv, Ra, R9, Rf, Rg, LER, efficiency, pump leakage,
efficacy; for layer designs also the pump peak, thickness, operating temperature and the colour
shift from 25 degC to it (MacAdam steps). Efficiency is converted light (leaked pump not counted)
per W pump for a layer and W per W absorbed for a blend; efficacy (all light) likewise.

Options)");
    std::string svg, format = "text";
    std::vector<std::string> folders, files;
    opts.add_options()("help,h", "show this help")("format,f", po::value(&format), "text | csv | json (default text)")
        ("svg", po::value(&svg), "write the spectra overlaid and the chromaticities on a u'v' diagram to this SVG file")
        ("phosphors", po::value(&folders), "a folder of your own phosphor files (*.toml); repeatable");
    po::variables_map vm;
    if (!parse_command_line(argc, argv, opts, "file", &files, vm, "compare")) return kExitOk;
    const Format f = parse_format(format);
    if (files.empty()) throw UsageError{"compare: give at least one file (see lampwright compare --help)"};

    std::vector<FileRole> inputs;
    add_inputs(inputs, files, "an input");
    add_inputs(inputs, folders, "--phosphors folder");
    check_outputs_apart({{svg, "--svg"}}, inputs);

    int status = kExitOk;
    std::vector<ComparisonEntry> entries;
    for (const auto& path : files) {
        try {
            for (auto& e : load_entries(path, folders)) entries.push_back(std::move(e));
        } catch (const InputError& e) {
            print_error(e.what());
            status = kExitBadInput;
        } catch (const Error& e) {
            print_error(fmt::format("{}: {}", path, e.what()));
            status = kExitBadInput;
        }
    }
    switch (f) {
        case Format::text: std::cout << comparison_text(entries); break;
        case Format::csv: std::cout << comparison_csv(entries); break;
        case Format::json: std::cout << dump_json(comparison_json(entries)) << '\n'; break;
    }
    for (const auto& e : entries)
        for (const auto& w : e.assessment.warnings) print_warning(fmt::format("{}: {}", e.name, w));
    for (const auto& e : entries)
        if (!e.caution.empty()) print_warning("CAUTION: " + e.name + ": " + e.caution);
    if (!svg.empty() && !entries.empty() && !write_document(svg, comparison_svg(entries))) status |= kExitOutputNotWritten;
    return status;
}

}  // namespace lampwright::cli
