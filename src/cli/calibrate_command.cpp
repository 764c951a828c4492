// lampwright calibrate: fit the blend model's per-phosphor absorption factors and per-lamp-type
// mercury-line fractions on trial lamps (measured spectra of lamps made to known recipes).
#include "cli_common.hpp"

#include "lampwright/design/calibration.hpp"
#include "lampwright/io/spectrum_io.hpp"
#include "lampwright/io/toml_access.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/report/calibration_report.hpp"

#include <fmt/format.h>

#include <iostream>

namespace po = boost::program_options;

namespace lampwright::cli {

namespace {

struct TrialFiles {
    std::string label, recipe, spectrum;
};

// The manifest: [[trial]] tables with recipe, spectrum and an optional label; paths relative to it.
std::vector<TrialFiles> read_manifest(const std::string& path) {
    const TomlDoc doc = TomlDoc::from_file(path);
    const auto& r = doc.root();
    doc.only_keys(r, {"trial"}, "");
    const toml::array* a = doc.array(r, "trial", "");
    if (!a || a->empty()) doc.fail(&r, "trial", "the manifest lists no trials: add [[trial]] tables with recipe and spectrum");
    std::vector<TrialFiles> out;
    for (std::size_t i = 0; i < a->size(); ++i) {
        const std::string where = fmt::format("trial[{}]", i + 1);
        const toml::table* t = a->get(i)->as_table();
        if (!t) doc.fail(a->get(i), where, "must be a table: write [[trial]] sections");
        doc.only_keys(*t, {"recipe", "spectrum", "label"}, where);
        TrialFiles f;
        f.recipe = path_relative_to(path, doc.require_string(*t, "recipe", where));
        f.spectrum = path_relative_to(path, doc.require_string(*t, "spectrum", where));
        f.label = doc.string(*t, "label", where).value_or(file_stem(f.spectrum));
        out.push_back(f);
    }
    return out;
}

SampledSpectrum read_trial_spectrum(const std::string& path) {
    SpectrumFile f = read_spectrum_file(path);
    for (const auto& w : f.warnings) print_warning(w);
    if (f.spectra.size() != 1)
        throw InputError(path, 0, fmt::format("holds {} spectra; a trial needs exactly one (one file per trial lamp)", f.spectra.size()));
    return f.spectra.front();
}

}  // namespace

int run_calibrate(int argc, char** argv) {
    po::options_description opts(std::string(R"(Usage: lampwright calibrate [options] MANIFEST.toml
       lampwright calibrate [options] --trial RECIPE.toml=SPECTRUM.csv [--trial ...]

Calibrates the blend model on trial lamps: spectra measured on lamps made to known recipes. Fits
by least squares on the spectra, per phosphor an effective absorption (brightness) factor (the
most used phosphor is the reference, factor 1) and per lamp type the visible mercury-line
fraction, with their uncertainties; warns when the trials cannot separate two parameters.
--out writes the calibration file that a recipe names with calibration = "FILE". The manifest
lists [[trial]] tables with recipe, spectrum and an optional label (paths relative to it).
See README, "Calibrating the model on trial lamps".

)") + "Options");
    std::string format = "text", out;
    std::vector<std::string> trials_arg, manifests, folders;
    opts.add_options()("help,h", "show this help")("format,f", po::value(&format), "text | json (default text)")
        ("trial", po::value(&trials_arg), "RECIPE.toml=SPECTRUM (split at the first '='); repeatable")
        ("out,o", po::value(&out), "write the calibration file (TOML)")
        ("phosphors", po::value(&folders), "a folder of your own phosphor files (*.toml); repeatable");
    po::variables_map vm;
    if (!parse_command_line(argc, argv, opts, "manifest", &manifests, vm, "calibrate")) return kExitOk;
    const Format f = parse_format(format);
    if (f == Format::csv) throw UsageError{"calibrate: --format is text or json"};
    if (manifests.size() > 1) throw UsageError{"calibrate: give at most one manifest file"};
    if (manifests.empty() && trials_arg.empty()) throw UsageError{"calibrate: give a manifest or --trial RECIPE=SPECTRUM (see lampwright calibrate --help)"};

    std::vector<TrialFiles> files;
    std::vector<FileRole> inputs;
    if (!manifests.empty()) inputs.push_back({manifests.front(), "the manifest"});
    for (const auto& t : trials_arg) {
        const auto eq = t.find('=');
        if (eq == std::string::npos || eq == 0 || eq + 1 == t.size())
            throw UsageError{fmt::format("calibrate: --trial takes RECIPE.toml=SPECTRUM, not '{}'", t)};
        files.push_back({file_stem(t.substr(eq + 1)), t.substr(0, eq), t.substr(eq + 1)});
    }
    add_inputs(inputs, folders, "--phosphors folder");
    for (const auto& t : files) {
        inputs.push_back({t.recipe, "a trial recipe"});
        inputs.push_back({t.spectrum, "a trial spectrum"});
    }
    check_outputs_apart({{out, "--out"}}, inputs);
    if (!manifests.empty()) {
        std::vector<TrialFiles> listed = read_manifest(manifests.front());
        std::vector<FileRole> listed_inputs;
        for (const auto& t : listed) {
            listed_inputs.push_back({t.recipe, "a trial recipe"});
            listed_inputs.push_back({t.spectrum, "a trial spectrum"});
        }
        check_outputs_apart({{out, "--out"}}, listed_inputs);
        files.insert(files.begin(), listed.begin(), listed.end());
    }

    std::vector<CalibrationTrial> trials;
    for (const auto& t : files) {
        CalibrationTrial ct;
        ct.label = t.label;
        ct.recipe_path = t.recipe;
        ct.spectrum_path = t.spectrum;
        const Recipe rec = load_recipe_without_calibration(t.recipe, folders);
        for (const auto& n : rec.notes) print_note(n);
        ct.blend = rec.blend;
        ct.measured = read_trial_spectrum(t.spectrum);
        trials.push_back(std::move(ct));
    }
    const std::string where = manifests.empty() ? files.front().recipe : manifests.front();
    const CalibrationResult result = naming_input(where, [&] { return calibrate_model(trials); });
    for (const auto& w : result.warnings) print_warning(w);
    if (!out.empty()) write_output_or_throw(out, calibration_toml(result, run_provenance()));
    if (f == Format::json) std::cout << dump_json(calibration_json(result)) << '\n';
    else std::cout << calibration_text(result);
    return kExitOk;
}

}  // namespace lampwright::cli
