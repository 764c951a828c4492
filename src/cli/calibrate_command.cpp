// lampwright calibrate: fit the blend model's per-phosphor absorption factors and per-lamp-type
// mercury-line fractions on trial lamps (measured spectra of lamps made to known recipes), or the
// LED layer model's kappa scale, scattering scale and brightness factors on measured modules
// (trials whose file is a layer design).
#include "cli_common.hpp"

#include "lampwright/design/calibration.hpp"
#include "lampwright/io/spectrum_io.hpp"
#include "lampwright/io/toml_access.hpp"
#include "lampwright/led/layer_calibration.hpp"
#include "lampwright/led/layer_design.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/report/calibration_report.hpp"

#include <fmt/format.h>

#include <filesystem>
#include <iostream>
#include <utility>

namespace po = boost::program_options;

namespace lampwright::cli {

namespace {

struct TrialFiles {
    std::string label, recipe, spectrum;  // recipe: a blend recipe or an LED layer design
    bool absolute = false;                // a module spectrum in W/nm for the design's pump power
    std::size_t line = 0;                 // in the manifest (0 for --trial)
};

// Whether a trial file is an LED layer design (a [layer] table) rather than a blend recipe.
bool is_layer_trial(const std::string& path) { return is_layer_design(TomlDoc::from_file(path)); }

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
        doc.only_keys(*t, {"recipe", "design", "spectrum", "label", "absolute"}, where);
        TrialFiles f;
        f.line = doc.line_of(t);
        if (t->get("recipe") && t->get("design")) doc.fail(t->get("design"), key_path(where, "design"), "give recipe (a lamp) or design (an LED module), not both");
        f.recipe = path_relative_to(path, t->get("design") ? doc.require_string(*t, "design", where) : doc.require_string(*t, "recipe", where));
        if (const toml::node* abs = t->get("absolute")) {
            if (!abs->is_boolean()) doc.fail(abs, key_path(where, "absolute"), "must be true or false");
            f.absolute = abs->value_or(false);
        }
        f.spectrum = path_relative_to(path, doc.require_string(*t, "spectrum", where));
        f.label = doc.string(*t, "label", where).value_or(file_stem(f.spectrum));
        // A missing file is named at its manifest line, not later without one.
        for (const auto& [key, file] : {std::pair<std::string, std::string>{t->get("design") ? "design" : "recipe", f.recipe}, {"spectrum", f.spectrum}})
            if (!std::filesystem::exists(file)) doc.fail(t->get(key), key_path(where, key), fmt::format("the file {} does not exist", file));
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

// The trials are one kind: every file a layer design, or none. A mixture is refused at the first
// trial of the other kind (its manifest line, or its file for --trial).
bool trials_are_layers(const std::vector<TrialFiles>& files, const std::string& manifest) {
    const bool first = is_layer_trial(files.front().recipe);
    for (std::size_t i = 1; i < files.size(); ++i) {
        if (is_layer_trial(files[i].recipe) == first) continue;
        const auto kind = [](bool layer) { return layer ? "an LED layer design" : "a blend recipe"; };
        const std::string problem = fmt::format("trial '{}': {} is {}, but trial '{}' ({}) is {}; calibrate fits one model at a time: "
                                                "give lamp trials and module trials in separate manifests",
                                                files[i].label, files[i].recipe, kind(!first), files.front().label, files.front().recipe, kind(first));
        if (files[i].line > 0 && !manifest.empty()) throw InputError(manifest, files[i].line, problem);
        throw InputError(files[i].recipe, 0, problem);
    }
    return first;
}

int run_layer_calibration(const std::vector<TrialFiles>& files, const std::vector<std::string>& folders, const std::string& where,
                          const std::string& out, Format f, bool brightness) {
    std::vector<LayerCalibrationTrial> trials;
    for (const auto& t : files) {
        LayerCalibrationTrial ct;
        ct.label = t.label;
        ct.design_path = t.recipe;
        ct.spectrum_path = t.spectrum;
        ct.design = layer_design_from_toml(TomlDoc::from_file(t.recipe), folders, {}, false);
        for (const auto& n : ct.design.calibration_notes) print_note(n);
        ct.measured = read_trial_spectrum(t.spectrum);
        ct.absolute = t.absolute;
        trials.push_back(std::move(ct));
    }
    LayerCalibrationOptions o;
    o.brightness = brightness;
    const LayerCalibrationResult result = naming_input(where, [&] { return calibrate_layer_model(trials, o); });
    for (const auto& w : result.warnings) print_warning(w);
    if (!out.empty()) write_output_or_throw(out, layer_calibration_toml(result, run_provenance()));
    if (f == Format::json) std::cout << dump_json(layer_calibration_json(result)) << '\n';
    else std::cout << layer_calibration_text(result);
    return kExitOk;
}

}  // namespace

int run_calibrate(int argc, char** argv) {
    po::options_description opts(std::string(R"(Usage: lampwright calibrate [options] MANIFEST.toml
       lampwright calibrate [options] --trial RECIPE.toml=SPECTRUM.csv [--trial ...]
       lampwright calibrate [options] --trial DESIGN.toml=SPECTRUM.csv [--trial ...]

Calibrates the blend model on trial lamps: spectra measured on lamps made to known recipes. Fits
by least squares on the spectra, per phosphor an effective absorption (brightness) factor (the
most used phosphor is the reference, factor 1) and per lamp type the visible mercury-line
fraction, with their uncertainties; warns when the trials cannot separate two parameters.
--out writes the calibration file that a recipe names with calibration = "FILE". The manifest
lists [[trial]] tables with recipe, spectrum and an optional label (paths relative to it).
See README, "Calibrating the model on trial lamps".

With LED layer designs as trials (design = "module.toml" in the manifest, or a design file in
--trial), it calibrates the layer model on measured modules instead: a scale on the mass
absorption coefficient, a scale on the grains' scattering, and per phosphor a brightness (QE)
factor; a trial's spectrum is relative (a free scale) unless absolute = true (W/nm for the
design's pump power; --absolute for --trial). A design names the file with calibration = "FILE".
See README, "Calibrating the layer model on measured modules".

)") + "Options");
    std::string format = "text", out;
    bool absolute = false, no_brightness = false;
    std::vector<std::string> trials_arg, manifests, folders;
    opts.add_options()("help,h", "show this help")("format,f", po::value(&format), "text | json (default text)")
        ("trial", po::value(&trials_arg), "RECIPE.toml=SPECTRUM (split at the first '='); repeatable")
        ("out,o", po::value(&out), "write the calibration file (TOML)")
        ("absolute", po::bool_switch(&absolute), "LED modules: the --trial spectra are absolute (W/nm for the design's pump power)")
        ("no-brightness", po::bool_switch(&no_brightness), "LED modules: fit the kappa and scattering scales only, no brightness factors")
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
        files.push_back({file_stem(t.substr(eq + 1)), t.substr(0, eq), t.substr(eq + 1), absolute, 0});
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

    const std::string where = manifests.empty() ? files.front().recipe : manifests.front();
    if (trials_are_layers(files, manifests.empty() ? "" : manifests.front()))
        return run_layer_calibration(files, folders, where, out, f, !no_brightness);
    if (absolute || no_brightness) throw UsageError{"calibrate: --absolute and --no-brightness are for LED module trials (layer designs)"};
    for (const auto& t : files)
        if (t.absolute) throw InputError(manifests.front(), t.line, fmt::format("trial '{}': absolute is for LED module trials (layer designs)", t.label));
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
    const CalibrationResult result = naming_input(where, [&] { return calibrate_model(trials); });
    for (const auto& w : result.warnings) print_warning(w);
    if (!out.empty()) write_output_or_throw(out, calibration_toml(result, run_provenance()));
    if (f == Format::json) std::cout << dump_json(calibration_json(result)) << '\n';
    else std::cout << calibration_text(result);
    return kExitOk;
}

}  // namespace lampwright::cli
