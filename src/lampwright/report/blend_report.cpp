#include "lampwright/report/blend_report.hpp"

#include "lampwright/report/assessment_report.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

namespace lampwright {

namespace {
// "grain-area" (opaque grains at 254 nm) or "mass-absorption" (LED pumps, or no grain data).
std::string share_model_name(const BlendResult& r) { return r.grain_model ? "grain-area" : "mass-absorption"; }
}  // namespace

std::vector<std::string> blend_columns(const BlendResult& r) {
    auto c = assessment_columns();
    // lamp_type and absorbed_share_model close the blend's fixed part, before the variable
    // component groups (docs/output-schemas.md).
    for (const char* k : {"quantum_yield", "stokes_efficiency", "radiant_efficiency", "efficacy_lm_per_W_absorbed",
                          "mercury_line_fraction", "pump_leak_W_per_W", "lamp_type", "absorbed_share_model", "coating_weight_mg_per_cm2",
                          "uv_absorbed", "visible_escape", "efficacy_lm_per_W_uv", "optimum_coating_weight_mg_per_cm2", "uv_185nm_fraction",
                          "uva_W_per_W"})
        c.push_back(k);
    for (std::size_t i = 1; i <= r.components.size(); ++i)
        for (const char* k : {"id", "mass_fraction", "photon_share", "radiant_share", "luminous_share", "stokes_efficiency"})
            c.push_back(fmt::format("c{}_{}", i, k));
    return c;
}

std::vector<std::string> blend_values(const BlendResult& r) {
    auto v = assessment_values(r.assessment);
    v.push_back(format_fixed(r.quantum_yield, 5));
    v.push_back(format_fixed(r.stokes_efficiency, 5));
    v.push_back(format_fixed(r.radiant_efficiency, 5));
    v.push_back(format_fixed(r.luminous_efficacy_absorbed, 2));
    v.push_back(format_fixed(r.mercury_line_fraction, 4));
    v.push_back(format_fixed(r.pump_leak_W_per_W, 5));
    v.push_back(r.lamp_type);
    v.push_back(share_model_name(r));
    const CoatingResult& k = r.coating;
    const auto coating_value = [&](double x, int digits) { return k.modelled ? format_fixed(x, digits) : std::string(); };
    v.push_back(coating_value(k.weight_mg_per_cm2, 3));
    v.push_back(coating_value(k.uv_absorbed, 5));
    v.push_back(coating_value(k.visible_escape, 5));
    v.push_back(coating_value(k.luminous_efficacy_uv, 2));
    v.push_back(coating_value(k.optimum_weight_mg_per_cm2, 3));
    v.push_back(r.lamp_type.empty() ? std::string() : format_fixed(k.uv_185nm_fraction, 4));
    v.push_back(format_fixed(k.uva_W_per_W, 6));
    for (const auto& c : r.components) {
        v.push_back(c.label);
        v.push_back(format_fixed(c.mass_fraction, 6));
        v.push_back(format_fixed(c.photon_share, 6));
        v.push_back(format_fixed(c.radiant_share, 6));
        v.push_back(format_fixed(c.luminous_share, 6));
        v.push_back(format_fixed(c.stokes_efficiency, 5));
    }
    return v;
}

nlohmann::ordered_json blend_json(const BlendResult& r, const BlendInput& in) {
    nlohmann::ordered_json j = assessment_json(r.assessment);
    j["excitation"] = in.excitation.describe();
    j["quantum_yield"] = r.quantum_yield;
    j["stokes_efficiency"] = r.stokes_efficiency;
    j["radiant_efficiency"] = r.radiant_efficiency;
    j["efficacy_lm_per_W_absorbed"] = r.luminous_efficacy_absorbed;
    j["mercury_line_fraction"] = r.mercury_line_fraction;
    j["pump_leak_W_per_W"] = r.pump_leak_W_per_W;
    j["lamp_type"] = r.lamp_type.empty() ? nlohmann::ordered_json(nullptr) : nlohmann::ordered_json(r.lamp_type);
    if (in.excitation.kind == Excitation::Kind::mercury) {
        j["mercury_line_ratios"] = r.mercury_line_ratios;
        j["mercury_source"] = r.mercury_source;
    } else {
        j["mercury_line_ratios"] = nullptr;
        j["mercury_source"] = nullptr;
    }
    j["absorbed_share_model"] = share_model_name(r);
    const CoatingResult& k = r.coating;
    if (k.modelled)
        j["coating"] = {{"weight_mg_per_cm2", k.weight_mg_per_cm2},
                        {"weight_source", k.weight_source},
                        {"uv_absorbed", k.uv_absorbed},
                        {"uv_lost", k.uv_lost},
                        {"visible_escape", k.visible_escape},
                        {"line_escape", k.line_escape},
                        {"uv365_escape", k.uv365_escape},
                        {"conversion", k.conversion},
                        {"efficacy_lm_per_W_uv", k.luminous_efficacy_uv},
                        {"optimum_weight_mg_per_cm2", k.optimum_weight_mg_per_cm2},
                        {"optimum_conversion", k.optimum_conversion}};
    else
        j["coating"] = nullptr;
    j["uv_185nm_fraction"] = r.lamp_type.empty() ? nlohmann::ordered_json(nullptr) : nlohmann::ordered_json(k.uv_185nm_fraction);
    j["uva_W_per_W"] = k.uva_W_per_W;
    auto& comps = j["components"] = nlohmann::ordered_json::array();
    for (const auto& c : r.components)
        comps.push_back({{"id", c.label},
                         {"mass_fraction", c.mass_fraction},
                         {"absorption", c.absorption},
                         {"quantum_efficiency", c.quantum_efficiency},
                         {"photon_share", c.photon_share},
                         {"radiant_share", c.radiant_share},
                         {"luminous_share", c.luminous_share},
                         {"stokes_efficiency", c.stokes_efficiency},
                         {"density_g_per_cm3", r.grain_model ? nlohmann::ordered_json(c.density_g_per_cm3) : nlohmann::ordered_json(nullptr)},
                         {"d50_um", r.grain_model ? nlohmann::ordered_json(c.d50_um) : nlohmann::ordered_json(nullptr)},
                         {"reflectance_254nm", r.grain_model ? nlohmann::ordered_json(c.reflectance) : nlohmann::ordered_json(nullptr)},
                         {"share_weight", c.share_weight}});
    j["calibration"] = r.calibration.empty() ? nlohmann::ordered_json(nullptr) : nlohmann::ordered_json(r.calibration);
    return j;
}

nlohmann::ordered_json blend_document_json(const BlendResult& r, const BlendInput& in) {
    auto j = blend_json(r, in);
    add_fidelity_summary_json(j, r.assessment);
    return j;
}

std::string blend_assumptions_text(const BlendResult& r, const BlendInput& in) {
    std::string o;
    if (in.excitation.kind == Excitation::Kind::mercury) {
        const auto& q = r.mercury_line_ratios;
        o += fmt::format("  visible mercury lines: {:.1f} % of the visible output; 404.7 : 435.8 : 546.1 : 577+579 nm = {:.2f} : {:.2f} : {:.2f} : {:.2f}\n",
                         100 * r.mercury_line_fraction, q[0], q[1], q[2], q[3]);
        o += fmt::format("    ({} lamp; {})\n", r.lamp_type, r.mercury_source);
        if (r.grain_model) {
            o += "  absorbed 254 nm shares: by grain area (opaque grains; mass / (density x d50) x (1 - reflectance)):\n";
            for (const auto& c : r.components)
                o += fmt::format("    {:<34} density {:.2f} g/cm3   d50 {:.1f} um   reflectance {:.2f}\n", c.label, c.density_g_per_cm3, c.d50_um,
                                 c.reflectance);
        } else {
            o += "  absorbed 254 nm shares: by mass x absorption (grain data missing, see the note below)\n";
        }
        const CoatingResult& k = r.coating;
        o += fmt::format("  UV: 253.7 nm, and {:.1f} % of the UV photons at 184.9 nm (data/mercury/uv_lines.toml, from memory); QE above: the mean "
                         "over both lines\n",
                         100 * k.uv_185nm_fraction);
        if (k.modelled) {
            o += fmt::format("  coating {:.2f} mg/cm2 ({}): UV absorbed {:.1f} %, lost into the glass {:.1f} %; phosphor light leaving {:.1f} %\n",
                             k.weight_mg_per_cm2, k.weight_source, 100 * k.uv_absorbed, 100 * k.uv_lost, 100 * k.visible_escape);
            o += fmt::format("    {:.1f} lm of phosphor light per W of UV; most light at {:.2f} mg/cm2 ({:+.1f} % against this weight; two-flux "
                             "Kubelka-Munk layer)\n",
                             k.luminous_efficacy_uv, k.optimum_weight_mg_per_cm2, 100 * (k.optimum_conversion / k.conversion - 1));
        } else {
            o += "  coating: not modelled (it needs every component's density and d50)\n";
        }
        o += fmt::format("  UV-A (315-400 nm) leaving the lamp: {:.2f} mW per W absorbed; see the cautions\n", 1000 * k.uva_W_per_W);
    }
    if (!r.calibration.empty())
        o += fmt::format("  calibrated model: {} (each listed phosphor's absorption x its factor; its line fraction unless the recipe sets mercury_lines)\n",
                         r.calibration);
    return o;
}

std::string coating_sweep_csv(const std::vector<BlendResult>& sweep) {
    std::string o = csv_line({"coating_weight_mg_per_cm2", "uv_absorbed", "uv_lost", "visible_escape", "conversion", "efficacy_lm_per_W_uv",
                              "mercury_line_fraction", "x", "y", "CCT_K", "Duv", "Ra"}) +
                    "\n";
    for (const auto& r : sweep) {
        const CoatingResult& k = r.coating;
        const Assessment& a = r.assessment;
        o += csv_line({format_fixed(k.weight_mg_per_cm2, 3), format_fixed(k.uv_absorbed, 5), format_fixed(k.uv_lost, 5),
                       format_fixed(k.visible_escape, 5), format_fixed(k.conversion, 5), format_fixed(k.luminous_efficacy_uv, 2),
                       format_fixed(r.mercury_line_fraction, 4), format_fixed(a.xy.x, 5), format_fixed(a.xy.y, 5), a.cct.valid ? format_fixed(a.cct.cct_K, 0) : std::string(),
                       format_fixed(a.cct.duv, 5), a.rendering ? format_fixed(a.rendering->ra, 1) : std::string()}) +
             "\n";
    }
    return o;
}

std::string blend_text(const BlendResult& r, const BlendInput& in) {
    std::string o = fmt::format("{}   ({})\n", r.name, in.excitation.describe());
    o += fmt::format("  {:<34} {:>7} {:>7} {:>5} {:>8} {:>8} {:>8} {:>7}\n", "component", "mass %", "absorb", "QE", "photons%",
                     "power%", "lumen%", "Stokes");
    for (const auto& c : r.components)
        o += fmt::format("  {:<34} {:>7.2f} {:>7.3f} {:>5.2f} {:>8.2f} {:>8.2f} {:>8.2f} {:>7.3f}\n", c.label, 100 * c.mass_fraction,
                         c.absorption, c.quantum_efficiency, 100 * c.photon_share, 100 * c.radiant_share, 100 * c.luminous_share,
                         c.stokes_efficiency);
    o += fmt::format("  quantum yield {:.3f}   Stokes efficiency {:.3f}   radiant efficiency {:.3f} W/W   efficacy {:.1f} lm per W absorbed\n",
                     r.quantum_yield, r.stokes_efficiency, r.radiant_efficiency, r.luminous_efficacy_absorbed);
    o += blend_assumptions_text(r, in);
    if (r.pump_leak_W_per_W > 0) o += fmt::format("  leaked pump: {:.3f} W per W absorbed\n", r.pump_leak_W_per_W);
    std::string a = assessment_text(r.assessment);
    o += a.substr(a.find('\n') + 1);
    return o;
}

std::vector<std::string> phosphor_columns() {
    return {"id", "abbreviation", "use", "emission_model", "peak_nm", "fwhm_nm", "absorption_254nm", "absorption_405nm",
            "qe_254nm", "qe_365_405nm", "density_g_per_cm3", "body_colour", "source"};
}

std::vector<std::string> phosphor_values(const Phosphor& p) {
    const auto s = emission_summary(p);
    std::string use;
    for (const auto& u : p.use) use += (use.empty() ? "" : "+") + u;
    auto opt = [](std::optional<double> v, int d) { return v ? fmt::format("{:.{}f}", *v, d) : std::string(); };
    std::string source = "emission: " + p.emission_source;
    if (!p.qe_source.empty()) source += " | QE: " + p.qe_source;
    return {p.id, p.abbreviation, use, p.emission_model, format_fixed(s.peak_nm, 1), format_fixed(s.fwhm_nm, 1), opt(absorption_at(p, 253.7), 3),
            opt(absorption_at(p, 405.0), 3), opt(p.qe_254nm, 2), opt(p.qe_365_405nm, 2),
            p.density_g_per_cm3 > 0 ? format_fixed(p.density_g_per_cm3, 2) : "", p.body_colour, source};
}

nlohmann::ordered_json phosphor_json(const Phosphor& p) {
    const auto cols = phosphor_columns();
    const auto vals = phosphor_values(p);
    // Text columns stay strings; the figures are numbers, null where the phosphor has none.
    static const std::vector<std::string> text_cols{"id", "abbreviation", "use", "emission_model", "body_colour", "source"};
    nlohmann::ordered_json j;
    for (std::size_t i = 0; i < cols.size(); ++i) {
        if (std::find(text_cols.begin(), text_cols.end(), cols[i]) != text_cols.end()) j[cols[i]] = vals[i];
        else j[cols[i]] = vals[i].empty() ? nlohmann::ordered_json(nullptr) : nlohmann::ordered_json(std::stod(vals[i]));
    }
    j["model_note"] = p.model_note;
    j["origin"] = p.origin;
    return j;
}

nlohmann::ordered_json phosphors_json(const std::vector<Phosphor>& phosphors) {
    nlohmann::ordered_json j = nlohmann::ordered_json::array();
    for (const auto& p : phosphors) j.push_back(phosphor_json(p));
    return j;
}

std::string phosphor_table_text(const std::vector<Phosphor>& phosphors) {
    std::string o = fmt::format("{:<36} {:<6} {:<9} {:>7} {:>6} {:>7} {:>7} {:>5} {:>5}\n", "id", "abbr", "use", "peak nm",
                                "FWHM", "abs254", "abs405", "QE254", "QEled");
    for (const auto& p : phosphors) {
        const auto v = phosphor_values(p);
        o += fmt::format("{:<36} {:<6} {:<9} {:>7} {:>6} {:>7} {:>7} {:>5} {:>5}\n", v[0], v[1], v[2], v[4], v[5], v[6], v[7], v[8], v[9]);
    }
    o += "\nEmission spectra are models built from published peak positions and widths, not measurements;\n"
         "sources per figure: lampwright phosphors --format json, or data/phosphors/*.toml.\n";
    return o;
}

}  // namespace lampwright
