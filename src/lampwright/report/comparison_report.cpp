#include "lampwright/report/comparison_report.hpp"

#include "lampwright/core/format.hpp"
#include "lampwright/report/svg_plot.hpp"

#include <fmt/format.h>

#include <algorithm>

namespace lampwright {

namespace {

std::string cell(double v, int decimals) { return format_fixed(v, decimals, "-"); }

struct Figures {
    double ra, r9, cct, rf, rg;
};

Figures figures(const ComparisonEntry& e) {
    const auto& a = e.assessment;
    return {a.rendering ? a.rendering->ra : NAN, a.rendering ? a.rendering->ri[8] : NAN, a.cct.valid ? a.cct.cct_K : NAN,
            a.fidelity ? a.fidelity->rf : NAN, a.fidelity ? a.fidelity->rg : NAN};
}

}  // namespace

std::string comparison_text(const std::vector<ComparisonEntry>& entries) {
    std::string o = fmt::format("{:<36} {:<8} {:>7} {:>7} {:>7} {:>8} {:>6} {:>6} {:>6} {:>6} {:>7} {:>6} {:>7} {:>8}\n", "name", "kind", "x", "y",
                                "CCT K", "Duv", "Ra", "R9", "Rf", "Rg", "LER", "eff", "leak%", "lm/W*");
    for (const auto& e : entries) {
        const auto& a = e.assessment;
        const auto [ra, r9, cct, rf, rg] = figures(e);
        o += fmt::format("{:<36} {:<8} {:>7} {:>7} {:>7} {:>8} {:>6} {:>6} {:>6} {:>6} {:>7} {:>6} {:>7} {:>8}\n", e.name.substr(0, 36), e.kind,
                         cell(a.xy.x, 4), cell(a.xy.y, 4), cell(cct, 0), format_signed(a.cct.duv, 4, "-"), cell(ra, 1), cell(r9, 1),
                         cell(rf, 1), cell(rg, 1), cell(a.ler_lm_per_W, 1), cell(e.efficiency, 3), cell(100 * e.leak_fraction, 2), cell(e.efficacy, 1));
    }
    o += "eff: converted W per W pump (layer), W per W absorbed (blend); lm/W*: per W pump (layer), per W absorbed (blend)\n";
    // The layer designs' own figures: pump, thickness, and the colour shift to the operating point.
    if (std::any_of(entries.begin(), entries.end(), [](const ComparisonEntry& e) { return e.kind == "layer"; })) {
        o += fmt::format("\n{:<36} {:>8} {:>10} {:>9} {:>7} {:>12}\n", "layer", "pump nm", "thickness", "leak%", "at degC", "shift steps");
        for (const auto& e : entries) {
            if (e.kind != "layer") continue;
            o += fmt::format("{:<36} {:>8} {:>7} um {:>9} {:>7} {:>12}\n", e.name.substr(0, 36), cell(e.pump_peak_nm, 1), cell(e.thickness_um, 0),
                             cell(100 * e.leak_fraction, 2), cell(e.operating_temperature_C, 0), cell(e.shift_steps, 2));
        }
        o += "shift steps: chromaticity from 25 degC to the operating temperature, MacAdam steps\n";
    }
    // Each entry's warnings (CIE 13.3 validity, no CCT, a phosphor without quenching data), as the
    // other commands print them.
    for (const auto& e : entries)
        for (const auto& w : e.assessment.warnings) o += fmt::format("note: {}: {}\n", e.name, w);
    return o;
}

std::string comparison_csv(const std::vector<ComparisonEntry>& entries) {
    std::string o = csv_line({"name", "kind", "x", "y", "cct_K", "duv", "Ra", "R9", "ler_lm_per_W", "efficiency", "pump_leak_fraction",
                              "efficacy_lm_per_W", "Rf", "Rg", "pump_peak_nm", "thickness_um", "operating_temperature_C", "shift_steps"}) + "\n";
    for (const auto& e : entries) {
        const auto& a = e.assessment;
        const auto [ra, r9, cct, rf, rg] = figures(e);
        // Missing values are empty cells, as in every CSV (docs/output-schemas.md); "-" is for the table.
        auto c = [](double v, int decimals) { return format_fixed(v, decimals); };
        o += csv_line({e.name, e.kind, c(a.xy.x, 5), c(a.xy.y, 5), c(cct, 1), c(a.cct.duv, 5), c(ra, 2), c(r9, 2),
                       c(a.ler_lm_per_W, 2), c(e.efficiency, 4), c(e.leak_fraction, 5), c(e.efficacy, 2), c(rf, 2), c(rg, 2),
                       c(e.pump_peak_nm, 1), c(e.thickness_um, 1), c(e.operating_temperature_C, 1), c(e.shift_steps, 3)}) + "\n";
    }
    return o;
}

nlohmann::ordered_json comparison_json(const std::vector<ComparisonEntry>& entries) {
    nlohmann::ordered_json out = nlohmann::ordered_json::array();
    for (const auto& e : entries) {
        const auto& a = e.assessment;
        const auto [ra, r9, cct, rf, rg] = figures(e);
        nlohmann::ordered_json j;
        j["name"] = e.name;
        j["kind"] = e.kind;
        j["x"] = a.xy.x;
        j["y"] = a.xy.y;
        j["cct_K"] = number_or_null(cct);
        j["duv"] = number_or_null(a.cct.valid ? a.cct.duv : NAN);
        j["Ra"] = number_or_null(ra);
        j["R9"] = number_or_null(r9);
        j["Rf"] = number_or_null(rf);
        j["Rg"] = number_or_null(rg);
        j["ler_lm_per_W"] = number_or_null(a.ler_lm_per_W);
        j["efficiency"] = number_or_null(e.efficiency);
        j["pump_leak_fraction"] = number_or_null(e.leak_fraction);
        j["efficacy_lm_per_W"] = number_or_null(e.efficacy);
        j["pump_peak_nm"] = number_or_null(e.pump_peak_nm);
        j["thickness_um"] = number_or_null(e.thickness_um);
        j["operating_temperature_C"] = number_or_null(e.operating_temperature_C);
        j["shift_steps"] = number_or_null(e.shift_steps);
        j["caution"] = e.caution.empty() ? nlohmann::ordered_json(nullptr) : nlohmann::ordered_json(e.caution);
        j["warnings"] = a.warnings;
        out.push_back(std::move(j));
    }
    return out;
}

std::string comparison_svg(const std::vector<ComparisonEntry>& entries) {
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
    // Each chart is widened by its legend column (svg_legend_width), so the legend sits beside the
    // plot area and the u'v' window keeps equal scales in u' and v'.
    const int spectra_w = 640 + svg_legend_width(spectra), uv_w = 520 + svg_legend_width(points);
    std::string o = fmt::format("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{}\" height=\"540\">\n",
                                spectra_w + 10 + uv_w + 10);
    SvgAxes spectra_axes{"Spectra (each scaled to its peak)", "wavelength (nm)", "relative power", 350, 800, 0, 1.05, spectra_w, 420};
    o += "<g transform=\"translate(0,60)\">" + svg_chart(spectra_axes, spectra) + "</g>";
    o += fmt::format("<g transform=\"translate({},10)\">", spectra_w + 10) +
         svg_uv_diagram("Chromaticity (CIE 1976 u'v')", points, uc - span, uc + span, vc - span, vc + span, uv_w, 520) + "</g>";
    return o + "</svg>\n";
}

}  // namespace lampwright
