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

}  // namespace lampwright
