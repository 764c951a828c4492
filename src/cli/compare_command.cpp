// lampwright compare: layer designs, blend recipes and measured spectra side by side.
#include "cli_common.hpp"

#include "lampwright/assessment_report.hpp"
#include "lampwright/interpolation.hpp"
#include "lampwright/layer_design.hpp"
#include "lampwright/layer_report.hpp"
#include "lampwright/recipe.hpp"
#include "lampwright/spectrum_io.hpp"
#include "lampwright/svg_plot.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <iostream>

namespace po = boost::program_options;

namespace lampwright::cli {

namespace {

struct Entry {
    std::string name, kind;
    Spectrum spectrum;
    Assessment assessment;
    double efficiency = NAN;   // conversion (layer) or radiant (blend) efficiency
    double leak_fraction = NAN;
    double efficacy = NAN;     // lm per W pump (layer) or per W absorbed (blend)
    std::string caution;
};

std::vector<Entry> load_entries(const std::string& path, const std::vector<std::string>& folders) {
    const auto ext = std::filesystem::path(path).extension().string();
    if (ext == ".toml") {
        const TomlDoc doc = TomlDoc::from_file(path);
        if (is_layer_design(doc)) {
            const LayerReport rep = layer_report(layer_design_from_toml(doc, folders));
            return {{rep.design.name, "layer", rep.operating.spectrum, rep.operating.assessment, rep.operating.conversion_efficiency,
                     rep.operating.pump_leak_fraction, rep.operating.efficacy_lm_per_W_pump, layer_caution(rep)}};
        }
        const Recipe recipe = recipe_from_toml(doc, folders);
        const BlendResult b = evaluate_blend(recipe.blend);
        return {{b.name, "blend", b.spectrum, b.assessment, b.radiant_efficiency, NAN, b.luminous_efficacy_absorbed, ""}};
    }
    std::vector<Entry> out;
    for (const auto& s : read_spectrum_file(path).spectra) {
        const Spectrum one = resample_to_1nm(s);
        out.push_back({s.name, "spectrum", one, assess(one), NAN, NAN, NAN, ""});
    }
    return out;
}

std::string cell(double v, int decimals) { return format_fixed(v, decimals, "-"); }

std::string comparison_svg(const std::vector<Entry>& entries) {
    std::vector<SvgSeries> spectra, points;
    double u0 = 1, u1 = 0, v0 = 1, v1 = 0;
    for (std::size_t i = 0; i < entries.size(); ++i) {
        const auto& e = entries[i];
        SvgSeries s{e.name, {}, {}, series_colour(i), false};
        const double peak = *std::max_element(e.spectrum.values.begin(), e.spectrum.values.end());
        for (std::size_t k = 0; k < e.spectrum.values.size(); ++k) {
            const double nm = e.spectrum.first_nm + static_cast<double>(k);
            if (nm < 350 || nm > 800) continue;
            s.x.push_back(nm);
            s.y.push_back(e.spectrum.values[k] / peak);
        }
        spectra.push_back(std::move(s));
        const UV p = e.assessment.uv_prime;
        points.push_back({e.name, {p.u}, {p.v}, series_colour(i), true});
        u0 = std::min(u0, p.u), u1 = std::max(u1, p.u), v0 = std::min(v0, p.v), v1 = std::max(v1, p.v);
    }
    const double span = std::max({u1 - u0, v1 - v0, 0.02}) * 0.6 + 0.01;
    const double uc = (u0 + u1) / 2, vc = (v0 + v1) / 2;
    std::string o = "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"1180\" height=\"540\">\n";
    o += "<g transform=\"translate(0,60)\">" + svg_chart({"Spectra (each scaled to its peak)", "wavelength (nm)", "relative power", 350, 800, 0, 1.05, 640, 420}, spectra) + "</g>";
    o += "<g transform=\"translate(650,10)\">" + svg_uv_diagram("Chromaticity (CIE 1976 u'v')", points, uc - span, uc + span, vc - span, vc + span) + "</g>";
    return o + "</svg>\n";
}

}  // namespace

int run_compare(int argc, char** argv) {
    po::options_description opts(R"(Usage: lampwright compare [options] FILE...

Side-by-side figures of LED layer designs (TOML with [layer]), blend recipes (other TOML) and
measured spectra (CSV): chromaticity, CCT, Duv, Ra, R9, LER, efficiency, pump leakage, efficacy.
Efficiency is W out per W pump for a layer and W per W absorbed for a blend; efficacy likewise.

Options)");
    std::string svg, format = "text";
    std::vector<std::string> folders, files;
    opts.add_options()("help,h", "show this help")("format,f", po::value(&format), "text | csv (default text)")
        ("svg", po::value(&svg), "write the spectra overlaid and the chromaticities on a u'v' diagram to this SVG file")
        ("phosphors", po::value(&folders), "a folder of your own phosphor files (*.toml); repeatable");
    po::variables_map vm;
    if (!parse_command_line(argc, argv, opts, "file", &files, vm, "compare")) return kExitOk;
    const Format f = parse_format(format);
    if (f == Format::json) throw UsageError{"compare: --format must be text or csv"};
    if (files.empty()) throw UsageError{"compare: give at least one file (see lampwright compare --help)"};

    int status = kExitOk;
    std::vector<Entry> entries;
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
    const std::vector<std::string> header{"name", "kind", "x", "y", "cct_K", "duv", "Ra", "R9", "ler_lm_per_W", "efficiency",
                                          "pump_leak_fraction", "efficacy_lm_per_W"};
    if (f == Format::csv) std::cout << csv_line(header) << '\n';
    else
        std::cout << fmt::format("{:<36} {:<8} {:>7} {:>7} {:>7} {:>8} {:>6} {:>6} {:>7} {:>6} {:>7} {:>8}\n", "name", "kind", "x", "y", "CCT K",
                                 "Duv", "Ra", "R9", "LER", "eff", "leak%", "lm/W*");
    for (const auto& e : entries) {
        const auto& a = e.assessment;
        const double ra = a.rendering ? a.rendering->ra : NAN, r9 = a.rendering ? a.rendering->ri[8] : NAN;
        const double cct = a.cct.valid ? a.cct.cct_K : NAN;
        if (f == Format::csv)
            std::cout << csv_line({e.name, e.kind, cell(a.xy.x, 5), cell(a.xy.y, 5), cell(cct, 1), cell(a.cct.duv, 5), cell(ra, 2), cell(r9, 2),
                                   cell(a.ler_lm_per_W, 2), cell(e.efficiency, 4), cell(e.leak_fraction, 5), cell(e.efficacy, 2)})
                      << '\n';
        else
            std::cout << fmt::format("{:<36} {:<8} {:>7} {:>7} {:>7} {:>8} {:>6} {:>6} {:>7} {:>6} {:>7} {:>8}\n", e.name.substr(0, 36), e.kind,
                                     cell(a.xy.x, 4), cell(a.xy.y, 4), cell(cct, 0), cell(a.cct.duv, 4), cell(ra, 1), cell(r9, 1),
                                     cell(a.ler_lm_per_W, 1), cell(e.efficiency, 3), cell(100 * e.leak_fraction, 2), cell(e.efficacy, 1));
    }
    if (f == Format::text)
        std::cout << "eff: W out per W pump (layer), W per W absorbed (blend); lm/W*: per W pump (layer), per W absorbed (blend)\n";
    for (const auto& e : entries)
        if (!e.caution.empty()) std::cerr << "lampwright: CAUTION: " << e.name << ": " << e.caution << '\n';
    if (!svg.empty() && !entries.empty()) {
        std::ofstream out(svg);
        if (!out) throw InputError(svg, 0, "cannot be written");
        out << comparison_svg(entries);
    }
    return status;
}

}  // namespace lampwright::cli
