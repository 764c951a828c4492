#include "lampwright/phosphor/calibration_file.hpp"

#include "lampwright/phosphor/excitation.hpp"
#include "lampwright/phosphor/mercury_discharge.hpp"

#include <fmt/format.h>

#include <cmath>

namespace lampwright {

const CalibratedPhosphor* ModelCalibration::phosphor(const std::string& id) const {
    for (const auto& p : phosphors)
        if (p.id == id) return &p;
    return nullptr;
}

const CalibratedLampType* ModelCalibration::lamp_type(const std::string& name) const {
    for (const auto& t : lamp_types)
        if (t.name == name) return &t;
    return nullptr;
}

std::vector<const toml::table*> calibration_tables(const TomlDoc& doc, const toml::table& root, const std::string& key) {
    std::vector<const toml::table*> out;
    const toml::array* a = doc.array(root, key, "");
    if (!a) return out;
    for (std::size_t i = 0; i < a->size(); ++i) {
        const toml::table* t = a->get(i)->as_table();
        if (!t) doc.fail(a->get(i), fmt::format("{}[{}]", key, i + 1), fmt::format("must be a table: write [[{}]] sections", key));
        out.push_back(t);
    }
    return out;
}

double calibration_sd(const TomlDoc& doc, const toml::table& t, const std::string& key, const std::string& where) {
    const auto v = doc.number(t, key, where);
    if (!v) return 0;
    if (*v < 0) doc.fail(t.get(key), key_path(where, key), fmt::format("a standard deviation must not be negative, not {:g}", *v));
    return *v;
}

ModelCalibration calibration_from_toml(const TomlDoc& doc) {
    const auto& r = doc.root();
    doc.only_keys(r, {"format", "excitation_nm", "reference", "phosphor", "lamp_type"}, "");
    const std::string format = doc.require_string(r, "format", "");
    if (format != kCalibrationFormat)
        doc.fail(r.get("format"), "format", fmt::format("must be \"{}\" (a file written by lampwright calibrate), not \"{}\"", kCalibrationFormat, format));
    const double nm = doc.require_number(r, "excitation_nm", "");
    if (std::abs(nm - kMercuryResonanceNm) > 0.5)
        doc.fail(r.get("excitation_nm"), "excitation_nm", fmt::format("must be 253.7 (calibrations are fitted on mercury discharge lamps), not {:g}", nm));
    ModelCalibration cal;
    cal.path = doc.source();
    cal.reference = doc.require_string(r, "reference", "");
    const auto phosphors = calibration_tables(doc, r, "phosphor");
    for (std::size_t i = 0; i < phosphors.size(); ++i) {
        const toml::table& t = *phosphors[i];
        const std::string where = fmt::format("phosphor[{}]", i + 1);
        doc.only_keys(t, {"id", "absorption_factor", "absorption_factor_sd"}, where);
        CalibratedPhosphor p;
        p.id = doc.require_string(t, "id", where);
        if (p.id.empty()) doc.fail(t.get("id"), key_path(where, "id"), "must name a phosphor");
        if (cal.phosphor(p.id)) doc.fail(t.get("id"), key_path(where, "id"), fmt::format("'{}' is listed twice", p.id));
        p.absorption_factor = doc.require_number(t, "absorption_factor", where);
        if (!(p.absorption_factor > 0) || p.absorption_factor > 1000)
            doc.fail(t.get("absorption_factor"), key_path(where, "absorption_factor"),
                     fmt::format("must be a factor above 0 and at most 1000, not {:g}", p.absorption_factor));
        p.sd = calibration_sd(doc, t, "absorption_factor_sd", where);
        cal.phosphors.push_back(p);
    }
    if (!cal.phosphor(cal.reference))
        doc.fail(r.get("reference"), "reference", fmt::format("'{}' is not one of the [[phosphor]] ids", cal.reference));
    const auto types = calibration_tables(doc, r, "lamp_type");
    for (std::size_t i = 0; i < types.size(); ++i) {
        const toml::table& t = *types[i];
        const std::string where = fmt::format("lamp_type[{}]", i + 1);
        doc.only_keys(t, {"name", "mercury_lines", "mercury_lines_sd"}, where);
        CalibratedLampType lt;
        lt.name = doc.require_string(t, "name", where);
        if (lt.name != "halophosphate" && lt.name != "tri-band" && lt.name != "broadband")
            doc.fail(t.get("name"), key_path(where, "name"), fmt::format("must be halophosphate, tri-band or broadband, not '{}'", lt.name));
        if (cal.lamp_type(lt.name)) doc.fail(t.get("name"), key_path(where, "name"), fmt::format("'{}' is listed twice", lt.name));
        lt.mercury_line_fraction = doc.require_number(t, "mercury_lines", where);
        if (lt.mercury_line_fraction < 0 || lt.mercury_line_fraction >= 0.5)
            doc.fail(t.get("mercury_lines"), key_path(where, "mercury_lines"),
                     fmt::format("must be a fraction in [0, 0.5), not {:g} (percent?)", lt.mercury_line_fraction));
        lt.sd = calibration_sd(doc, t, "mercury_lines_sd", where);
        cal.lamp_types.push_back(lt);
    }
    return cal;
}

ModelCalibration load_calibration(const std::string& path) { return calibration_from_toml(TomlDoc::from_file(path)); }

std::vector<std::string> apply_calibration(const ModelCalibration& cal, BlendInput& blend, const std::vector<bool>& absorption_set) {
    std::vector<std::string> notes;
    for (std::size_t i = 0; i < blend.components.size(); ++i) {
        BlendComponent& c = blend.components[i];
        const CalibratedPhosphor* p = cal.phosphor(c.phosphor.id);
        if (!p) {
            notes.push_back(fmt::format("component '{}': phosphor {} was in none of the trials of calibration {}: its absorption is the "
                                        "uncalibrated data (factor 1, the same as the reference {})",
                                        c.label, c.phosphor.id, cal.path, cal.reference));
        } else if (i < absorption_set.size() && absorption_set[i]) {
            notes.push_back(fmt::format("component '{}': the recipe's absorption = {:g} is used; calibration {} (factor {:.4g}) not applied to it",
                                        c.label, c.absorption.value_or(0), cal.path, p->absorption_factor));
        } else {
            c.absorption = absorption_for(c.phosphor, blend.excitation) * p->absorption_factor;
        }
    }
    const std::string type = blend.lamp_type ? *blend.lamp_type : infer_lamp_type(blend.components);
    const CalibratedLampType* lt = cal.lamp_type(type);
    if (blend.mercury_line_fraction) {
        if (lt)
            notes.push_back(fmt::format("the recipe's mercury_lines = {:g} is used; calibration {} ({} lamps: {:.4g}) not applied to it",
                                        *blend.mercury_line_fraction, cal.path, type, lt->mercury_line_fraction));
    } else if (lt) {
        blend.mercury_line_fraction = lt->mercury_line_fraction;
        blend.mercury_line_fraction_from = "the calibration " + cal.path;
    } else {
        notes.push_back(fmt::format("calibration {} has no {} lamps: the mercury-line fraction is the lamp type's default", cal.path, type));
    }
    blend.calibration = cal.path;
    return notes;
}

}  // namespace lampwright
