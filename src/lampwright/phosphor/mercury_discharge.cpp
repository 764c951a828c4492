#include "lampwright/phosphor/mercury_discharge.hpp"

#include "lampwright/core/embedded_data.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/io/toml_access.hpp"
#include "lampwright/phosphor/blend.hpp"

#include <fmt/format.h>

namespace lampwright {

namespace {

constexpr const char* kDataPath = "mercury/low_pressure_lines.toml";

std::vector<MercuryLineSet> load_line_sets() {
    const TomlDoc doc(std::string(embedded_file(kDataPath)), "data/" + std::string(kDataPath));
    const auto& r = doc.root();
    // The line ratios belong to the discharge, not to the coating; they are taken from the
    // halophosphate lamps, where no phosphor line lies on a mercury line (see the data file).
    const auto* ratios_table = doc.table(r, "halophosphate", "");
    if (!ratios_table) doc.fail(&r, "", "missing table [halophosphate]");
    const auto* arr = doc.array(*ratios_table, "relative_power", "halophosphate");
    if (!arr || arr->size() != 4) doc.fail(ratios_table, "halophosphate.relative_power", "must list 4 line-group powers");
    std::array<double, 4> ratios{};
    for (std::size_t k = 0; k < 4; ++k) {
        const auto v = arr->get(k)->value<double>();
        if (!v || !(*v >= 0)) doc.fail(arr->get(k), "halophosphate.relative_power", "must be numbers >= 0");
        ratios[k] = *v;
    }
    std::vector<MercuryLineSet> sets;
    for (const char* type : {"halophosphate", "tri-band", "broadband"}) {
        const auto* t = doc.table(r, type, "");
        if (!t) doc.fail(&r, "", fmt::format("missing table [{}]", type));
        MercuryLineSet s;
        s.lamp_type = type;
        s.visible_fraction = doc.require_number(*t, "visible_fraction", type);
        if (!(s.visible_fraction >= 0 && s.visible_fraction < 0.5))
            doc.fail(t->get("visible_fraction"), std::string(type) + ".visible_fraction", "must be a fraction in [0, 0.5)");
        s.relative_power = ratios;
        s.source = fmt::format("{} lamps: visible fraction derived from CIE 15:2004 Table T.6 ({}); line ratios from FL1-FL6 "
                               "(data/{}, tools/derive_lamp_phosphors.cpp)",
                               type, std::string(type) == "halophosphate" ? "FL1-FL6" : std::string(type) == "tri-band" ? "FL10-FL12" : "FL7-FL9",
                               kDataPath);
        sets.push_back(s);
    }
    return sets;
}

MercuryUvLines load_uv_lines() {
    const std::string path = "mercury/uv_lines.toml";
    const TomlDoc doc(std::string(embedded_file(path)), "data/" + path);
    const auto& r = doc.root();
    const auto* l185 = doc.table(r, "line_185nm", "");
    const auto* l365 = doc.table(r, "line_365nm", "");
    if (!l185 || !l365) doc.fail(&r, "", "needs tables [line_185nm] and [line_365nm]");
    MercuryUvLines u;
    u.photon_fraction_185nm = doc.require_number(*l185, "photon_fraction", "line_185nm");
    if (!(u.photon_fraction_185nm >= 0 && u.photon_fraction_185nm < 1))
        doc.fail(l185->get("photon_fraction"), "line_185nm.photon_fraction", "must be a fraction in [0, 1)");
    u.source_185nm = doc.string(*l185, "source", "line_185nm").value_or("");
    u.relative_power_365nm = doc.require_number(*l365, "relative_power", "line_365nm");
    u.wavelength_365nm = doc.require_number(*l365, "wavelength_nm", "line_365nm");
    u.source_365nm = doc.string(*l365, "source", "line_365nm").value_or("");
    return u;
}

bool is_halophosphate(const Phosphor& p) { return p.lamp_family == "halophosphate"; }

bool is_triband_component(const Phosphor& p) {
    if (p.emission_model == "lines") return true;
    if (p.emission_model != "bands" || p.bands.empty()) return false;
    for (const auto& b : p.bands)
        if (b.peak_nm >= 490) return false;
    return true;
}

}  // namespace

const std::vector<MercuryLineSet>& mercury_line_sets() {
    static const std::vector<MercuryLineSet> sets = load_line_sets();
    return sets;
}

const MercuryUvLines& mercury_uv_lines() {
    static const MercuryUvLines lines = load_uv_lines();
    return lines;
}

const MercuryLineSet& mercury_line_set(const std::string& lamp_type) {
    for (const auto& s : mercury_line_sets())
        if (s.lamp_type == lamp_type) return s;
    throw Error(fmt::format("unknown lamp type '{}': use halophosphate, tri-band or broadband", lamp_type));
}

std::string infer_lamp_type(const std::vector<BlendComponent>& components) {
    double total = 0, halo = 0;
    bool all_triband = !components.empty();
    for (const auto& c : components) {
        total += c.mass_fraction;
        if (is_halophosphate(c.phosphor)) halo += c.mass_fraction;
        if (!is_triband_component(c.phosphor)) all_triband = false;
    }
    if (total > 0 && halo >= 0.5 * total) return "halophosphate";
    return all_triband ? "tri-band" : "broadband";
}

}  // namespace lampwright
