// lampwright unmix: measured spectra decomposed into phosphor emissions plus the discharge light,
// and the mass fractions the blend model needs for them (phosphor/spectral_unmixing.hpp).
#include "cli_common.hpp"

#include "lampwright/core/format.hpp"
#include "lampwright/io/spectrum_io.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/phosphor/spectral_unmixing.hpp"
#include "lampwright/report/unmix_report.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <iostream>
#include <set>

namespace po = boost::program_options;

namespace lampwright::cli {

namespace {

const char* kUnmixHelp = R"(Usage: lampwright unmix [options] SPECTRUM...

Decomposes each measured spectrum into non-negative contributions of phosphor emission spectra
plus the discharge light (the four visible mercury line groups for a 253.7 nm discharge, the
default; the pump band for an LED pump), each model spectrum seen through the measurement's own
triangular bandpass, by non-negative least squares (Lawson and Hanson 1974) over 380-780 nm.
Reports per component the share of the absorbed excitation, of the emitted photons and of the
power, the mass fraction the blend model needs for them (its inverse) with its sd, the relative
residual, and x, y, CCT, Ra, R9 of the reconstruction beside the measured ones.

Components: --components ID,... (library ids or abbreviations), or --recipe (its components and
its excitation); with neither, the best subset of 1 to --max-components library phosphors made
for the excitation (use "lamp" for mercury, "led" for a pump) by the smallest
BIC = n ln(RSS/n) + p ln(n) (Schwarz 1978), every subset tried.

SPECTRUM is a text table as 'assess' reads it, on a uniform grid of whole nanometres (a 5 nm table
is a band-averaged measurement: it is modelled so). See README, "Unmixing a measured spectrum".

)";

const NumberRange kExcitationRange{253.7, 470, "nm", false, false, "253.7 for a mercury discharge, or 360-470 for an LED pump"};
const NumberRange kPumpFwhmRange{0, 60, "nm", true};
const NumberRange kShiftRange{0, 20, "nm"};
const NumberRange kWidthRange{0, 30, "%"};
const NumberRange kBandwidthRange{0, 20, "nm", false, true, "0: the measurement's step"};
const NumberRange kMaxComponentsRange{1, 6, "components", false, true};

// The ids of a comma-separated list. Library ids may hold commas themselves
// ("LaPO4:Ce3+,Tb3+"), so at each place the longest run of comma-joined pieces that names a
// phosphor is taken; a piece that starts no known name is returned alone (and then refused).
std::vector<std::string> split_ids(const std::string& list, const PhosphorLibrary& library) {
    std::vector<std::string> pieces;
    std::string cur;
    for (char c : list) {
        if (c == ',') pieces.push_back(cur), cur.clear();
        else cur += c;
    }
    pieces.push_back(cur);
    auto trim = [](const std::string& t) {
        const auto a = t.find_first_not_of(" \t"), b = t.find_last_not_of(" \t");
        return a == std::string::npos ? std::string() : t.substr(a, b - a + 1);
    };
    std::vector<std::string> out;
    for (std::size_t i = 0; i < pieces.size();) {
        std::size_t take = 1;
        std::string joined = pieces[i];
        for (std::size_t j = i + 1; j < pieces.size(); ++j) {
            joined += "," + pieces[j];
            if (library.try_find(trim(joined))) take = j - i + 1;
        }
        std::string id = pieces[i];
        for (std::size_t j = i + 1; j < i + take; ++j) id += "," + pieces[j];
        id = trim(id);
        if (id.empty()) throw UsageError{"--components: an empty phosphor id in '" + list + "'"};
        out.push_back(id);
        i += take;
    }
    return out;
}

}  // namespace

int run_unmix(int argc, char** argv) {
    po::options_description opts(std::string(kUnmixHelp) + kSafetyNotice + "\nOptions");
    std::string format = "text", svg, spectrum_out, recipe_path;
    std::vector<std::string> folders, files, component_lists;
    double excitation_nm = 0, pump_fwhm = 0, shift_nm = 0, width_pct = 0;
    int bandwidth = 0, max_components = 4;
    opts.add_options()("help,h", "show this help")("format,f", po::value(&format), "text | csv | json (default text)")
        ("components", po::value(&component_lists), "the phosphors to unmix into, by library id or abbreviation, comma-separated (ids that hold commas are recognised whole); repeatable")
        ("recipe", po::value(&recipe_path), "take the components (with their absorption, QE and grain data) and the excitation from this recipe")
        ("svg", po::value(&svg), "write measured vs reconstructed with the component stack, one panel per spectrum, to this SVG file")
        ("spectrum-out", po::value(&spectrum_out), "write the reconstructed spectra (wavelength_nm, one column per spectrum) as CSV")
        ("phosphors", po::value(&folders), "a folder of your own phosphor files (*.toml); repeatable");
    add_number_option(opts, "excitation", &excitation_nm, kExcitationRange, "what excites the phosphors (default 253.7, mercury)");
    add_number_option(opts, "pump-fwhm", &pump_fwhm, kPumpFwhmRange, "FWHM of the LED pump band (needed with an LED --excitation)");
    add_number_option(opts, "shift-nm", &shift_nm, kShiftRange, "let each band emitter shift by up to this much (default 0: off)");
    add_number_option(opts, "width-pct", &width_pct, kWidthRange, "let each band emitter's FWHM change by up to this many per cent (default 0: off)");
    add_number_option(opts, "bandwidth-nm", &bandwidth, kBandwidthRange, "the instrument's bandpass FWHM (default: the table's step)");
    add_number_option(opts, "max-components", &max_components, kMaxComponentsRange, "largest subset tried without --components/--recipe (default 4)");
    po::variables_map vm;
    if (!parse_command_line(argc, argv, opts, "spectrum", &files, vm, "unmix")) return kExitOk;
    const Format f = parse_format(format);
    if (files.empty()) throw UsageError{"unmix: no spectrum file; see lampwright unmix --help"};
    if (vm.count("components") && vm.count("recipe")) throw UsageError{"unmix: give --components or --recipe, not both"};
    if (vm.count("recipe") && vm.count("excitation"))
        throw UsageError{"unmix: the recipe names the excitation; --excitation goes with --components or the subset choice"};
    if (vm.count("recipe") && vm.count("max-components")) throw UsageError{"unmix: --max-components is for the subset choice, not with --recipe"};
    if (vm.count("components") && vm.count("max-components")) throw UsageError{"unmix: --max-components is for the subset choice, not with --components"};

    BlendUnmixingOptions options;
    options.bandwidth_nm = bandwidth;
    options.max_shift_nm = shift_nm;
    options.max_width_change = width_pct / 100;
    options.max_components = max_components;
    if (vm.count("excitation")) {
        if (excitation_nm <= 254.0) {
            options.excitation = Excitation::mercury();
        } else if (excitation_nm >= 360) {
            if (!vm.count("pump-fwhm")) throw UsageError{fmt::format("unmix: --excitation {:g} is an LED pump: give its --pump-fwhm too", excitation_nm)};
            options.excitation = Excitation::led(excitation_nm, pump_fwhm);
        } else {
            throw UsageError{fmt::format("--excitation must be 253.7 (mercury discharge) or 360-470 nm (LED pump), not {:g}", excitation_nm)};
        }
    }
    if (vm.count("pump-fwhm") && options.excitation.kind != Excitation::Kind::led)
        throw UsageError{"unmix: --pump-fwhm goes with an LED --excitation (360-470 nm)"};

    std::vector<FileRole> inputs;
    add_inputs(inputs, files, "a spectrum");
    if (!recipe_path.empty()) inputs.push_back({recipe_path, "the recipe"});
    add_inputs(inputs, folders, "--phosphors folder");
    check_outputs_apart({{svg, "--svg"}, {spectrum_out, "--spectrum-out"}}, inputs);

    UnmixSettings settings;
    settings.max_components = max_components;
    settings.max_shift_nm = shift_nm;
    settings.max_width_change = width_pct / 100;
    std::vector<BlendComponent> components;
    std::vector<Phosphor> candidates;
    if (!recipe_path.empty()) {
        const Recipe recipe = load_recipe(recipe_path, folders);
        components = recipe.blend.components;
        options.excitation = recipe.blend.excitation;
        settings.components_from = "the recipe " + recipe_path;
    } else {
        const PhosphorLibrary library = PhosphorLibrary::with_folders(folders);
        if (vm.count("components")) {
            std::set<std::string> seen;
            std::vector<std::string> ids;
            for (const auto& list : component_lists)
                for (auto& id : split_ids(list, library)) ids.push_back(std::move(id));
            for (const auto& id : ids) {
                const Phosphor* p = library.try_find(id);
                if (!p) {
                    try {
                        library.find(id);  // throws with the near matches
                    } catch (const Error& e) {
                        throw Error(fmt::format("--components: {}", e.what()));
                    }
                }
                if (!seen.insert(p->id).second) throw Error(fmt::format("--components: '{}' is given twice", p->id));
                BlendComponent c;
                c.label = p->id;
                c.phosphor = *p;
                c.mass_fraction = 1;
                components.push_back(std::move(c));
            }
            settings.components_from = "--components";
        } else {
            candidates = unmixing_candidates(library.all(), options.excitation);
            if (candidates.empty()) throw Error(fmt::format("no library phosphor is made for the {}", options.excitation.describe()));
            settings.components_from = "chosen";
        }
    }
    settings.excitation = options.excitation.describe();

    int status = kExitOk;
    std::vector<BlendUnmixing> results;
    for (const auto& file : files) {
        SpectrumFile parsed;
        try {
            parsed = read_spectrum_file(file);
        } catch (const InputError& e) {
            print_error(e.what());
            status |= kExitBadInput;
            continue;
        }
        for (const auto& w : parsed.warnings) print_warning(w);
        for (const auto& sampled : parsed.spectra) {
            try {
                BlendUnmixing u = candidates.empty() ? unmix_blend(sampled, components, options) : unmix_blend_choosing(sampled, candidates, options);
                for (const auto& w : unmix_warnings(u)) print_warning(fmt::format("{}: {}", u.name, w));
                for (const auto& w : parsed.warnings) u.notes.push_back(w);  // the file's warnings hold for each spectrum
                results.push_back(std::move(u));
            } catch (const Error& e) {
                const std::string what = e.what();
                const std::string named = "spectrum '" + sampled.name + "'";
                print_error(InputError(file, 0, what.rfind(named, 0) == 0 ? what : named + ": " + what).what());
                status |= kExitBadInput;
            }
        }
    }
    if (!results.empty()) {
        if (!spectrum_out.empty() && !write_output(spectrum_out, unmix_spectra_csv(results))) status |= kExitOutputNotWritten;
        if (!svg.empty() && !write_document(svg, unmix_svg(results))) status |= kExitOutputNotWritten;
    }
    const std::size_t groups = candidates.empty() ? components.size() : static_cast<std::size_t>(max_components);
    switch (f) {
        case Format::text:
            for (std::size_t i = 0; i < results.size(); ++i) std::cout << (i ? "\n" : "") << unmix_text(results[i]);
            if (!results.empty()) std::cout << '\n' << unmix_method_text(settings);
            break;
        case Format::csv:
            std::cout << csv_line(unmix_columns(groups)) << '\n';
            for (const auto& u : results) std::cout << csv_line(unmix_values(u, groups)) << '\n';
            break;
        case Format::json: std::cout << dump_json(unmix_json(results, settings)) << '\n'; break;
    }
    return status;
}

}  // namespace lampwright::cli
