#include "lampwright/report/unmix_report.hpp"

#include "lampwright/core/format.hpp"
#include "lampwright/report/svg_plot.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>

namespace lampwright {

const char* const kUnmixUncertaintyMethod =
    "from the residual and the NNLS Jacobian on the active set: cov = s^2 (A^T A)^-1, s^2 = RSS / (n - p), "
    "carried to the mass fractions by the delta method (linearised; shifts held at their fitted values; "
    "no sd for a component at zero)";

namespace {

double ra_of(const Assessment& a) { return a.rendering ? a.rendering->ra : std::nan(""); }
double r9_of(const Assessment& a) { return a.rendering ? a.rendering->ri[8] : std::nan(""); }
double cct_of(const Assessment& a) { return a.cct.valid ? a.cct.cct_K : std::nan(""); }
double rf_of(const Assessment& a) { return a.fidelity ? a.fidelity->rf : std::nan(""); }
double rg_of(const Assessment& a) { return a.fidelity ? a.fidelity->rg : std::nan(""); }

bool is_mercury(const BlendUnmixing& u) { return u.excitation.kind == Excitation::Kind::mercury; }

}  // namespace

std::vector<std::string> unmix_warnings(const BlendUnmixing& u) {
    std::vector<std::string> w = u.notes;
    for (const auto& m : u.measured_assessment.warnings) w.push_back("measured: " + m);
    for (const auto& m : u.fit_assessment.warnings) w.push_back("reconstruction: " + m);
    return w;
}

std::vector<std::string> unmix_columns(std::size_t groups) {
    std::vector<std::string> c{"name", "residual", "fit_x", "fit_y", "fit_Ra", "fit_R9", "x", "y", "Ra", "R9",
                               "discharge_line_fraction", "fit_cct_K", "cct_K", "components", "bic"};
    for (std::size_t i = 1; i <= groups; ++i)
        for (const char* k : {"id", "mass_fraction", "photon_share", "mass_fraction_sd", "radiant_share", "emitted_photon_share", "shift_nm", "width_change"})
            c.push_back(fmt::format("c{}_{}", i, k));
    for (const char* k : {"fit_Rf", "fit_Rg", "Rf", "Rg"}) c.push_back(k);  // CIE 224 Rf, TM-30 Rg (appended last)
    return c;
}

std::vector<std::string> unmix_values(const BlendUnmixing& u, std::size_t groups) {
    const Assessment& f = u.fit_assessment;
    const Assessment& m = u.measured_assessment;
    std::vector<std::string> v{u.name,
                               format_fixed(u.relative_residual, 6),
                               format_fixed(f.xy.x, 5),
                               format_fixed(f.xy.y, 5),
                               format_fixed(ra_of(f), 1),
                               format_fixed(r9_of(f), 1),
                               format_fixed(m.xy.x, 5),
                               format_fixed(m.xy.y, 5),
                               format_fixed(ra_of(m), 1),
                               format_fixed(r9_of(m), 1),
                               format_fixed(u.discharge_line_fraction, 5),
                               format_fixed(cct_of(f), 0),
                               format_fixed(cct_of(m), 0),
                               std::to_string(u.components.size()),
                               format_fixed(u.bic, 2)};
    for (std::size_t i = 0; i < groups; ++i) {
        if (i >= u.components.size()) {
            v.insert(v.end(), 8, "");
            continue;
        }
        const auto& c = u.components[i];
        v.push_back(c.id);
        v.push_back(format_fixed(c.mass_fraction, 6));
        v.push_back(format_fixed(c.photon_share, 6));
        v.push_back(format_fixed(c.mass_fraction_sd, 6));
        v.push_back(format_fixed(c.radiant_share, 6));
        v.push_back(format_fixed(c.emitted_photon_share, 6));
        v.push_back(format_fixed(c.shift_nm, 2));
        v.push_back(format_fixed(c.width_change, 4));
    }
    for (double x : {rf_of(f), rg_of(f), rf_of(m), rg_of(m)}) v.push_back(format_fixed(x, 1));
    return v;
}

nlohmann::ordered_json unmix_result_json(const BlendUnmixing& u) {
    const Assessment& f = u.fit_assessment;
    const Assessment& m = u.measured_assessment;
    nlohmann::ordered_json j;
    j["name"] = u.name;
    j["residual"] = u.relative_residual;
    j["fit_x"] = f.xy.x;
    j["fit_y"] = f.xy.y;
    j["fit_cct_K"] = number_or_null(cct_of(f));
    j["fit_Ra"] = number_or_null(ra_of(f));
    j["fit_R9"] = number_or_null(r9_of(f));
    j["x"] = m.xy.x;
    j["y"] = m.xy.y;
    j["cct_K"] = number_or_null(cct_of(m));
    j["Ra"] = number_or_null(ra_of(m));
    j["R9"] = number_or_null(r9_of(m));
    j["discharge_line_fraction"] = u.discharge_line_fraction;
    j["excitation"] = u.excitation.describe();
    if (is_mercury(u)) {
        j["mercury_line_power"] = u.mercury_power;
        j["pump_power"] = nullptr;
    } else {
        j["mercury_line_power"] = nullptr;
        j["pump_power"] = u.pump_power;
    }
    j["bandwidth_nm"] = u.bandwidth_nm;
    j["points"] = u.points;
    j["parameters"] = u.parameters;
    j["bic"] = u.bic;
    j["residual_sd"] = u.residual_sd;
    j["uncertainty"] = u.uncertainty;
    j["selection"] = u.selection;
    j["candidates"] = u.candidates;
    j["subsets_tried"] = u.subsets_tried;
    auto& comps = j["components"] = nlohmann::ordered_json::array();
    for (const auto& c : u.components)
        comps.push_back({{"id", c.id},
                         {"mass_fraction", c.mass_fraction},
                         {"mass_fraction_sd", number_or_null(c.mass_fraction_sd)},
                         {"photon_share", c.photon_share},
                         {"emitted_photon_share", c.emitted_photon_share},
                         {"radiant_share", c.radiant_share},
                         {"power", c.power},
                         {"band_emitter", c.band_emitter},
                         {"shift_nm", c.shift_nm},
                         {"width_change", c.width_change},
                         {"quantum_efficiency", c.quantum_efficiency},
                         {"share_weight", c.share_weight}});
    j["fit_Rf"] = number_or_null(rf_of(f));
    j["fit_Rg"] = number_or_null(rg_of(f));
    j["Rf"] = number_or_null(rf_of(m));
    j["Rg"] = number_or_null(rg_of(m));
    j["warnings"] = unmix_warnings(u);
    return j;
}

nlohmann::ordered_json unmix_json(const std::vector<BlendUnmixing>& results, const UnmixSettings& s) {
    nlohmann::ordered_json j;
    j["schema_version"] = kUnmixSchemaVersion;
    j["command"] = "unmix";
    j["settings"] = {{"excitation", s.excitation},
                     {"components_from", s.components_from},
                     {"max_components", s.max_components},
                     {"max_shift_nm", s.max_shift_nm},
                     {"max_width_change", s.max_width_change}};
    j["method"] = {{"solver", "non-negative least squares (Lawson and Hanson 1974) over the 380-780 nm points, each model spectrum seen through the measurement's triangular bandpass"},
                   {"selection", "smallest BIC = n ln(RSS/n) + p ln(n) (Schwarz 1978) over every subset of 1 to max_components candidates"},
                   {"uncertainty", kUnmixUncertaintyMethod},
                   {"mass_fraction", "model inverse: absorbed share s_i ~ emitted photons_i / QE_i, mass fraction w_i ~ s_i / g_i (blend model)"}};
    auto& arr = j["spectra"] = nlohmann::ordered_json::array();
    for (const auto& u : results) arr.push_back(unmix_result_json(u));
    return j;
}

std::string unmix_text(const BlendUnmixing& u) {
    std::string o = fmt::format("{}   ({}; {} nm bandpass)\n", u.name, u.excitation.describe(), u.bandwidth_nm);
    o += fmt::format("  components: {}\n", u.selection == "given" ? std::string("as given") : u.selection);
    bool widths = false;
    for (const auto& c : u.components) widths = widths || c.width_change != 0;
    o += fmt::format("  {:<34} {:>7} {:>7} {:>9} {:>9} {:>7} {:>8}{}\n", "component", "mass %", "± sd %", "absorb.%", "emitted%", "power%",
                     "shift nm", widths ? "  width %" : "");
    for (const auto& c : u.components)
        o += fmt::format("  {:<34} {:>7.2f} {:>7} {:>9.2f} {:>9.2f} {:>7.2f} {:>8}{}\n", c.id, 100 * c.mass_fraction,
                         std::isfinite(c.mass_fraction_sd) ? format_fixed(100 * c.mass_fraction_sd, 2) : std::string("at 0"),
                         100 * c.photon_share, 100 * c.emitted_photon_share, 100 * c.radiant_share,
                         c.band_emitter ? format_signed(c.shift_nm, 2) : std::string("lines"),
                         !widths ? std::string() : fmt::format(" {:>8}", c.band_emitter ? format_signed(100 * c.width_change, 1) : std::string("lines")));
    if (is_mercury(u)) {
        const auto& q = u.mercury_power;
        const double ref = q[1] > 0 ? q[1] : 1.0;
        o += fmt::format("  visible mercury lines: {:.2f} % of the 380-780 nm power; 404.7 : 435.8 : 546.1 : 577+579 nm = {:.2f} : {:.2f} : {:.2f} : {:.2f}\n",
                         100 * u.discharge_line_fraction, q[0] / ref, q[1] / ref, q[2] / ref, q[3] / ref);
    } else {
        o += fmt::format("  pump band: {:.2f} % of the 380-780 nm power\n", 100 * u.discharge_line_fraction);
    }
    o += fmt::format("  residual {:.4f} (relative L2 over 380-780 nm, {} points)   BIC {:.1f} ({} parameters)\n", u.relative_residual, u.points,
                     u.bic, u.parameters);
    const Assessment& m = u.measured_assessment;
    const Assessment& f = u.fit_assessment;
    o += fmt::format("  {:<16} {:>10} {:>14}\n", "", "measured", "reconstructed");
    o += fmt::format("  {:<16} {:>10.4f} {:>14.4f}\n", "x", m.xy.x, f.xy.x);
    o += fmt::format("  {:<16} {:>10.4f} {:>14.4f}\n", "y", m.xy.y, f.xy.y);
    o += fmt::format("  {:<16} {:>10} {:>14}\n", "CCT K", format_fixed(cct_of(m), 0, "-"), format_fixed(cct_of(f), 0, "-"));
    o += fmt::format("  {:<16} {:>10} {:>14}\n", "Ra", format_fixed(ra_of(m), 1, "-"), format_fixed(ra_of(f), 1, "-"));
    o += fmt::format("  {:<16} {:>10} {:>14}\n", "R9", format_fixed(r9_of(m), 1, "-"), format_fixed(r9_of(f), 1, "-"));
    o += fmt::format("  {:<16} {:>10} {:>14}\n", "Rf (CIE 224)", format_fixed(rf_of(m), 1, "-"), format_fixed(rf_of(f), 1, "-"));
    o += fmt::format("  {:<16} {:>10} {:>14}\n", "Rg (TM-30)", format_fixed(rg_of(m), 1, "-"), format_fixed(rg_of(f), 1, "-"));
    if (!u.uncertainty) o += "  no sd: no more points than parameters\n";
    return o;
}

std::string unmix_method_text(const UnmixSettings& s) {
    std::string text = "Method: non-negative least squares (Lawson and Hanson 1974) of the components' emission plus the discharge light "
                       "(the four visible mercury line groups, or the LED pump band), each seen through the measurement's triangular "
                       "bandpass, over the 380-780 nm points. Mass fraction: the blend model's inverse (absorbed share ~ emitted "
                       "photons / QE, mass ~ share / g). sd: ";
    text += kUnmixUncertaintyMethod;
    text += ".";
    if (s.components_from == "chosen")
        text += fmt::format(" Components chosen by the smallest BIC = n ln(RSS/n) + p ln(n) (Schwarz 1978) over every subset of 1 to {}.",
                            s.max_components);
    if (s.max_shift_nm > 0)
        text += fmt::format(" Band emitters could shift by up to {:g} nm (BOBYQA, NNLS inside); line emitters do not shift.", s.max_shift_nm);
    if (s.max_width_change > 0)
        text += fmt::format(" Each band emitter's FWHM could change by up to {:g} % (in the same search); line widths are fixed.",
                            100 * s.max_width_change);
    return wrap_text(text, 100);
}

std::string unmix_spectra_csv(const std::vector<BlendUnmixing>& results) {
    std::map<double, std::vector<std::string>> rows;
    for (std::size_t j = 0; j < results.size(); ++j) {
        const auto& r = results[j].reconstruction;
        for (std::size_t i = 0; i < r.wavelengths_nm.size(); ++i) {
            auto& row = rows[r.wavelengths_nm[i]];
            row.resize(results.size());
            row[j] = fmt::format("{:.7g}", r.values[i]);
        }
    }
    std::vector<std::string> header{"wavelength_nm"};
    for (const auto& r : results) header.push_back(r.name);
    std::string o = csv_line(header) + "\n";
    for (auto& [nm, cells] : rows) {
        cells.resize(results.size());
        std::vector<std::string> line{fmt::format("{:g}", nm)};
        line.insert(line.end(), cells.begin(), cells.end());
        o += csv_line(line) + "\n";
    }
    return o;
}

std::string unmix_svg(const std::vector<BlendUnmixing>& results) {
    constexpr int kW = 760, kH = 420;
    std::string body;
    int y0 = 0, width = kW;
    for (const auto& u : results) {
        const auto& wl = u.reconstruction.wavelengths_nm;
        SvgAxes axes;
        axes.title = fmt::format("{}: measured vs reconstructed (residual {:.4f})", u.name, u.relative_residual);
        axes.x_label = "wavelength (nm)";
        axes.y_label = "spectral power (as measured)";
        axes.x_min = 380;
        axes.x_max = 780;
        double peak = 0;
        for (std::size_t i = 0; i < wl.size(); ++i)
            if (wl[i] >= 380 && wl[i] <= 780) peak = std::max({peak, u.reconstruction.values[i], u.measured_values.empty() ? 0.0 : u.measured_values[i]});
        axes.y_max = peak > 0 ? 1.05 * peak : 1;
        axes.width = kW;
        axes.height = kH;

        // The stack: discharge light at the bottom, each component on top, as filled bands.
        std::vector<const SampledSpectrum*> parts{&u.discharge_reconstruction};
        for (const auto& c : u.component_reconstruction) parts.push_back(&c);
        std::vector<double> below(wl.size(), 0.0);
        SvgOverlay overlay;
        std::vector<SvgSeries> series;
        for (std::size_t k = 0; k < parts.size(); ++k) {
            std::vector<double> above = below;
            for (std::size_t i = 0; i < wl.size(); ++i) above[i] += parts[k]->values[i];
            SvgPolygon band;
            band.fill = series_colour(k + 2);
            band.fill_opacity = 0.35;
            band.stroke = "none";
            band.title = parts[k]->name;
            for (std::size_t i = 0; i < wl.size(); ++i) band.x.push_back(wl[i]), band.y.push_back(above[i]);
            for (std::size_t i = wl.size(); i-- > 0;) band.x.push_back(wl[i]), band.y.push_back(below[i]);
            overlay.polygons.push_back(std::move(band));
            // A labelled, empty series gives the band its legend entry.
            series.push_back({parts[k]->name, {}, {}, series_colour(k + 2), false});
            below = std::move(above);
        }
        if (!u.measured_values.empty()) series.push_back({"measured", wl, u.measured_values, "#000", true});
        series.push_back({"reconstructed", wl, u.reconstruction.values, series_colour(0), false});
        const int legend = svg_legend_width(series);
        axes.width = kW + legend;
        width = std::max(width, axes.width);
        std::string chart = svg_chart(axes, series, overlay);
        chart.replace(0, 4, fmt::format(R"(<svg x="0" y="{}")", y0));
        body += chart;
        y0 += kH;
    }
    return fmt::format(R"(<svg xmlns="http://www.w3.org/2000/svg" width="{0}" height="{1}" viewBox="0 0 {0} {1}">)", width, std::max(y0, 1)) + "\n" +
           body + "</svg>\n";
}

}  // namespace lampwright
