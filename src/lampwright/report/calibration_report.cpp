#include "lampwright/report/calibration_report.hpp"

#include "lampwright/io/toml_access.hpp"

#include <fmt/format.h>

#include <cmath>

namespace lampwright {

namespace {

std::string value_sd(double v, double sd, int digits) {
    if (!std::isfinite(sd)) return fmt::format("{:.{}f} +- (not determined)", v, digits);
    return fmt::format("{:.{}f} +- {:.2g}", v, digits, sd);
}

nlohmann::ordered_json number_or_null(double v) { return std::isfinite(v) ? nlohmann::ordered_json(v) : nlohmann::ordered_json(nullptr); }

const char* kind_name(CalibrationParameterKind k) {
    switch (k) {
        case CalibrationParameterKind::absorption_factor: return "absorption_factor";
        case CalibrationParameterKind::line_fraction: return "mercury_line_fraction";
        case CalibrationParameterKind::scale: return "scale";
        case CalibrationParameterKind::mass_absorption_scale: return "mass_absorption_scale";
        case CalibrationParameterKind::scattering_scale: return "scattering_scale";
        case CalibrationParameterKind::brightness_factor: return "brightness_factor";
    }
    return "";
}

}  // namespace

std::string calibration_text(const CalibrationResult& r) {
    std::string o = fmt::format("Model calibration on {} trial lamp{} ({} points, {} parameters; least squares on the spectra)\n", r.trials.size(),
                                r.trials.size() == 1 ? "" : "s", r.n, r.p);
    o += "  trial                     residual  recipe / spectrum\n";
    for (const auto& t : r.trials)
        o += fmt::format("  {:<25} {:>8.4f}  {} / {}\n", t.label, t.residual, t.recipe_path, t.spectrum_path);
    o += "  (residual: relative L2 over 380-780 nm of model through the bandpass minus measurement)\n";
    if (!r.reference.empty()) o += fmt::format("  reference phosphor: {} ({})\n", r.reference, r.reference_reason);
    o += "  absorption factors (x the phosphor's absorption, so x its share of the absorbed 254 nm photons):\n";
    if (!r.reference.empty()) o += fmt::format("    {:<36} {}\n", r.reference, "1 (reference)");
    for (const auto& q : r.parameters)
        if (q.kind == CalibrationParameterKind::absorption_factor) o += fmt::format("    {:<36} {}\n", q.name, value_sd(q.value, q.sd, 4));
    o += "  visible mercury-line fraction per lamp type:\n";
    for (const auto& q : r.parameters)
        if (q.kind == CalibrationParameterKind::line_fraction)
            o += fmt::format("    {:<36} {}  (default {:.4f})\n", q.name, value_sd(q.value, q.sd, 4), q.start);
    o += "  spectrum scales (free, the spectra being relative):";
    for (const auto& q : r.parameters)
        if (q.kind == CalibrationParameterKind::scale) o += fmt::format(" {} {:.4f}", q.name, q.value);
    o += "\n";
    o += fmt::format("  s = {:.3g} (sqrt(RSS / (n - p))); uncertainties: s^2 (J^T J)^-1 at the optimum; {} ({} evaluations)\n", std::sqrt(r.s2),
                     r.solver, r.evaluations);
    return o;  // the warnings go to standard error (and into the file's header)
}

nlohmann::ordered_json calibration_json(const CalibrationResult& r) {
    nlohmann::ordered_json j;
    j["reference"] = r.reference.empty() ? nlohmann::ordered_json(nullptr) : nlohmann::ordered_json(r.reference);
    j["reference_reason"] = r.reference_reason;
    auto& ps = j["parameters"] = nlohmann::ordered_json::array();
    for (const auto& q : r.parameters)
        ps.push_back({{"kind", kind_name(q.kind)}, {"name", q.name}, {"value", q.value}, {"sd", number_or_null(q.sd)}, {"start", q.start}});
    auto& c = j["correlation"] = nlohmann::ordered_json::array();
    for (const auto& row : r.correlation) {
        auto jr = nlohmann::ordered_json::array();
        for (double v : row) jr.push_back(number_or_null(v));
        c.push_back(jr);
    }
    auto& ts = j["trials"] = nlohmann::ordered_json::array();
    for (const auto& t : r.trials)
        ts.push_back({{"label", t.label}, {"recipe", t.recipe_path}, {"spectrum", t.spectrum_path}, {"residual", t.residual}, {"points", t.points}});
    j["rss"] = r.rss;
    j["n"] = r.n;
    j["p"] = r.p;
    j["s2"] = number_or_null(r.s2);
    j["solver"] = r.solver;
    j["evaluations"] = r.evaluations;
    j["warnings"] = r.warnings;
    return j;
}

std::string calibration_toml(const CalibrationResult& r, const RunProvenance& pv) {
    std::string o = "# lampwright model calibration (lampwright calibrate); named by a recipe as calibration = \"this file\"\n";
    o += fmt::format("# made {} by lampwright {}: {}\n", pv.time_utc, pv.version, pv.command_line);
    o += "# trials (relative L2 residual over 380-780 nm):\n";
    for (const auto& t : r.trials) o += fmt::format("#   {}: {:.5f}  recipe {}  spectrum {}\n", t.label, t.residual, t.recipe_path, t.spectrum_path);
    if (!r.reference.empty()) o += fmt::format("# reference {}: {}\n", r.reference, r.reference_reason);
    for (const auto& w : r.warnings) o += "# warning: " + w + "\n";
    o += fmt::format("format = {}\n", toml_quote(kCalibrationFormat));
    o += "excitation_nm = 253.7\n";
    o += fmt::format("reference = {}\n", toml_quote(r.reference));
    for (const auto& p : r.calibration.phosphors) {
        o += fmt::format("\n[[phosphor]]\nid = {}\nabsorption_factor = {}\n", toml_quote(p.id), p.absorption_factor);
        if (std::isfinite(p.sd)) o += fmt::format("absorption_factor_sd = {:.3g}\n", p.sd);
        else o += "# absorption_factor_sd: not determined by the trials\n";
    }
    for (const auto& t : r.calibration.lamp_types) {
        o += fmt::format("\n[[lamp_type]]\nname = {}\nmercury_lines = {}\n", toml_quote(t.name), t.mercury_line_fraction);
        if (std::isfinite(t.sd)) o += fmt::format("mercury_lines_sd = {:.3g}\n", t.sd);
        else o += "# mercury_lines_sd: not determined by the trials\n";
    }
    return o;
}

namespace {

nlohmann::ordered_json parameters_json(const std::vector<CalibrationParameter>& qs, const std::vector<std::vector<double>>& correlation) {
    nlohmann::ordered_json j;
    auto& ps = j["parameters"] = nlohmann::ordered_json::array();
    for (const auto& q : qs)
        ps.push_back({{"kind", kind_name(q.kind)}, {"name", q.name}, {"value", q.value}, {"sd", number_or_null(q.sd)}, {"start", q.start}});
    auto& c = j["correlation"] = nlohmann::ordered_json::array();
    for (const auto& row : correlation) {
        auto jr = nlohmann::ordered_json::array();
        for (double v : row) jr.push_back(number_or_null(v));
        c.push_back(jr);
    }
    return j;
}

}  // namespace

std::string layer_calibration_text(const LayerCalibrationResult& r) {
    const auto& f = r.fit;
    std::string o = fmt::format("Layer model calibration on {} module{} ({} points, {} parameters; least squares on the spectra)\n", r.trials.size(),
                                r.trials.size() == 1 ? "" : "s", f.n, f.p);
    o += "  trial                     residual  spectrum  design / spectrum\n";
    for (std::size_t t = 0; t < r.trials.size(); ++t) {
        const auto& tr = r.trials[t];
        o += fmt::format("  {:<25} {:>8.4f}  {:<8}  {} / {}\n", tr.label, tr.residual, r.absolute[t] ? "absolute" : "relative", tr.recipe_path, tr.spectrum_path);
    }
    o += "  (residual: relative L2 over the measured points within 360-830 nm of model through the bandpass minus measurement)\n";
    for (const auto& q : f.parameters) {
        if (q.kind == CalibrationParameterKind::mass_absorption_scale)
            o += fmt::format("  mass absorption scale (x kappa):          {}\n", value_sd(q.value, q.sd, 4));
        if (q.kind == CalibrationParameterKind::scattering_scale)
            o += fmt::format("  scattering scale (x the grains' mu_s):    {}\n", value_sd(q.value, q.sd, 4));
    }
    if (!r.reference.empty()) o += fmt::format("  reference phosphor: {} ({})\n", r.reference, r.reference_reason);
    bool any = false;
    for (const auto& q : f.parameters) any = any || q.kind == CalibrationParameterKind::brightness_factor;
    if (any || !r.reference.empty()) {
        o += "  brightness factors (x the phosphor's quantum efficiency):\n";
        if (!r.reference.empty()) o += fmt::format("    {:<36} {}\n", r.reference, "1 (reference)");
        for (const auto& q : f.parameters)
            if (q.kind == CalibrationParameterKind::brightness_factor) o += fmt::format("    {:<36} {}\n", q.name, value_sd(q.value, q.sd, 4));
    }
    bool scales = false;
    for (const auto& q : f.parameters) scales = scales || q.kind == CalibrationParameterKind::scale;
    if (scales) {
        o += "  spectrum scales (free, relative spectra):";
        for (const auto& q : f.parameters)
            if (q.kind == CalibrationParameterKind::scale) o += fmt::format(" {} {:.4f}", q.name, q.value);
        o += "\n";
    }
    o += fmt::format("  s = {:.3g} (sqrt(RSS / (n - p))); uncertainties: s^2 (J^T J)^-1 at the optimum; {} ({} evaluations)\n", std::sqrt(f.s2),
                     f.solver, f.evaluations);
    return o;
}

nlohmann::ordered_json layer_calibration_json(const LayerCalibrationResult& r) {
    nlohmann::ordered_json j;
    j["model"] = "layer";
    j["reference"] = r.reference.empty() ? nlohmann::ordered_json(nullptr) : nlohmann::ordered_json(r.reference);
    j["reference_reason"] = r.reference_reason;
    const auto pj = parameters_json(r.fit.parameters, r.fit.correlation);
    j["parameters"] = pj["parameters"];
    j["correlation"] = pj["correlation"];
    auto& ts = j["trials"] = nlohmann::ordered_json::array();
    for (std::size_t t = 0; t < r.trials.size(); ++t) {
        const auto& tr = r.trials[t];
        ts.push_back({{"label", tr.label}, {"design", tr.recipe_path}, {"spectrum", tr.spectrum_path}, {"absolute", bool(r.absolute[t])},
                      {"residual", tr.residual}, {"points", tr.points}});
    }
    j["rss"] = r.fit.rss;
    j["n"] = r.fit.n;
    j["p"] = r.fit.p;
    j["s2"] = number_or_null(r.fit.s2);
    j["solver"] = r.fit.solver;
    j["evaluations"] = r.fit.evaluations;
    j["warnings"] = r.warnings;
    return j;
}

std::string layer_calibration_toml(const LayerCalibrationResult& r, const RunProvenance& pv) {
    const auto& c = r.calibration;
    std::string o = "# lampwright layer calibration (lampwright calibrate on LED modules); named by a layer design as calibration = \"this file\"\n";
    o += fmt::format("# made {} by lampwright {}: {}\n", pv.time_utc, pv.version, pv.command_line);
    o += "# trials (relative L2 residual over the measured points within 360-830 nm):\n";
    for (std::size_t t = 0; t < r.trials.size(); ++t) {
        const auto& tr = r.trials[t];
        o += fmt::format("#   {}: {:.5f}  {}  design {}  spectrum {}\n", tr.label, tr.residual, r.absolute[t] ? "absolute" : "relative", tr.recipe_path,
                         tr.spectrum_path);
    }
    if (!r.reference.empty()) o += fmt::format("# reference {}: {}\n", r.reference, r.reference_reason);
    for (const auto& w : r.warnings) o += "# warning: " + w + "\n";
    o += fmt::format("format = {}\n", toml_quote(kLayerCalibrationFormat));
    auto value = [&](const char* key, double v, double sd) {
        o += fmt::format("{} = {}\n", key, v);
        if (std::isfinite(sd)) o += fmt::format("{}_sd = {:.3g}\n", key, sd);
        else o += fmt::format("# {}_sd: not determined by the trials\n", key);
    };
    value("mass_absorption_scale", c.mass_absorption_scale, c.mass_absorption_scale_sd);
    value("scattering_scale", c.scattering_scale, c.scattering_scale_sd);
    if (!c.reference.empty()) o += fmt::format("reference = {}\n", toml_quote(c.reference));
    for (const auto& p : c.phosphors) {
        o += fmt::format("\n[[phosphor]]\nid = {}\n", toml_quote(p.id));
        value("brightness_factor", p.brightness_factor, p.sd);
    }
    return o;
}

}  // namespace lampwright
