#include "lampwright/report/layer_report.hpp"

#include "lampwright/report/assessment_report.hpp"

#include <fmt/format.h>

#include <cmath>

namespace lampwright {

std::vector<std::string> layer_columns() {
    auto c = assessment_columns();
    for (const char* k : {"temperature_C", "pump_leak_fraction", "converted_efficiency", "total_efficiency", "efficacy_lm_per_W_pump", "pump_power_W",
                          "leaked_pump_W", "leaked_uv_violet_W", "converted_W", "stokes_loss_W", "quantum_loss_W",
                          "package_loss_W", "photons_leaked", "photons_escaping", "photons_lost", "photons_package", "x_25C", "y_25C", "shift_macadam_steps"})
        c.push_back(k);
    return c;
}

std::vector<std::string> layer_values(const LayerEvaluation& rep) {
    const auto& r = rep.operating;
    auto v = assessment_values(r.assessment);
    for (double x : {r.temperature_C, r.pump_leak_fraction, r.converted_efficiency, r.total_efficiency, r.efficacy_lm_per_W_pump, r.pump_power_W,
                     r.leaked_pump_W, r.leaked_uv_violet_W, r.converted_W, r.stokes_loss_W, r.quantum_loss_W,
                     r.package_loss_W, r.pump_photons_leaked, r.photons_escaping, r.photons_lost, r.photons_package, rep.room.assessment.xy.x, rep.room.assessment.xy.y,
                     rep.shift_steps})
        v.push_back(format_fixed(x, 6));
    return v;
}

nlohmann::ordered_json layer_json(const LayerEvaluation& rep) {
    const auto cols = layer_columns();
    nlohmann::ordered_json j = assessment_json(rep.operating.assessment);
    const auto vals = layer_values(rep);
    for (std::size_t i = assessment_columns().size(); i < cols.size(); ++i) j[cols[i]] = vals[i].empty() ? nlohmann::ordered_json(nullptr) : nlohmann::ordered_json(std::stod(vals[i]));
    j["thickness_um"] = rep.design.thickness_um;
    j["method"] = rep.operating.method;
    j["calibration"] = rep.design.calibration.empty() ? nlohmann::ordered_json(nullptr) : nlohmann::ordered_json(rep.design.calibration);
    j["monte_carlo_photons"] = rep.operating.photons > 0 ? nlohmann::ordered_json(rep.operating.photons) : nlohmann::ordered_json(nullptr);
    auto& comps = j["components"] = nlohmann::ordered_json::array();
    for (std::size_t i = 0; i < rep.operating.components.size(); ++i) {
        const auto& c = rep.operating.components[i];
        comps.push_back({{"id", c.label}, {"loading", number_or_null(i < rep.design.components.size() ? rep.design.components[i].loading : NAN)},
                         {"quantum_efficiency", c.quantum_efficiency}, {"pump_photons_absorbed", c.pump_photons_absorbed},
                         {"photons_absorbed", c.photons_absorbed}, {"photons_emitted", c.photons_emitted},
                         {"photons_escaping", c.photons_escaping}, {"power_escaping_W", c.power_escaping_W}});
    }
    const std::string caution = layer_caution(rep);
    if (!caution.empty()) {
        j["caution"] = caution;
        j["warnings"].push_back("CAUTION: " + caution);  // also printed on stderr
    }
    return j;
}

std::vector<std::string> layer_package_columns() {
    return {"junction_temperature_C", "pump_peak_nm", "pump_fwhm_nm", "top", "chip_area_fraction", "chip_loss_W", "photons_chip", "uv_share", "blue_share",
            "pump_peak_nm_25C"};
}

namespace {
const char* top_name(const LayerDesign& d) { return d.top == LayerDesign::Top::dome ? "dome" : "flat"; }
}  // namespace

std::vector<std::string> layer_package_values(const LayerEvaluation& rep) {
    const auto& r = rep.operating;
    std::vector<std::string> v;
    for (double x : {r.junction_temperature_C, r.pump_peak_nm, r.pump_fwhm_nm}) v.push_back(format_fixed(x, 6));
    v.push_back(top_name(rep.design));
    for (double x : {rep.design.chip_area_fraction, r.chip_loss_W, r.photons_chip, r.uv_share, r.blue_share, rep.room.pump_peak_nm}) v.push_back(format_fixed(x, 6));
    return v;
}

void add_layer_package_json(nlohmann::ordered_json& j, const LayerEvaluation& rep) {
    const auto cols = layer_package_columns();
    const auto vals = layer_package_values(rep);
    for (std::size_t i = 0; i < cols.size(); ++i) {
        if (cols[i] == "top") j[cols[i]] = vals[i];
        else j[cols[i]] = std::stod(vals[i]);
    }
}

nlohmann::ordered_json layer_document_json(const LayerEvaluation& rep) {
    auto j = layer_json(rep);
    add_fidelity_summary_json(j, rep.operating.assessment);
    add_layer_package_json(j, rep);
    return j;
}

std::string layer_text(const LayerEvaluation& rep) {
    const auto& d = rep.design;
    const auto& r = rep.operating;
    std::string o = fmt::format("{}   ({}, {:g} W; layer {:g} um)\n", d.name, d.pump.describe(), d.pump_power_W, d.thickness_um);
    o += fmt::format("  {:<28} {:>8} {:>6} {:>10} {:>10} {:>10} {:>10}\n", "component", "loading%", "QE", "pump abs", "all abs",
                     "emitted", "escaping");
    for (std::size_t i = 0; i < r.components.size(); ++i) {
        const auto& c = r.components[i];
        o += fmt::format("  {:<28} {:>8.2f} {:>6.3f} {:>10.4f} {:>10.4f} {:>10.4f} {:>10.4f}\n", c.label, 100 * d.components[i].loading,
                         c.quantum_efficiency, c.pump_photons_absorbed, c.photons_absorbed, c.photons_emitted, c.photons_escaping);
    }
    o += "  (photons per pump photon)\n";
    o += fmt::format("  at {:g} degC: pump leak {:.2f} % of output ({:.4f} W, of which {:.4f} W below 420 nm)\n", r.temperature_C,
                     100 * r.pump_leak_fraction, r.leaked_pump_W, r.leaked_uv_violet_W);
    // Lines of at most 100 columns.
    o += fmt::format("  efficiency: converted {:.3f} W/W, total {:.3f} W/W (leaked pump included)\n", r.converted_efficiency, r.total_efficiency);
    o += fmt::format("  efficacy:   {:.1f} lm per W of pump\n", r.efficacy_lm_per_W_pump);
    o += fmt::format("  output shares: UV (below 400 nm) {:.2f} %, blue (400-500 nm) {:.2f} % of the power\n", 100 * r.uv_share, 100 * r.blue_share);
    o += fmt::format("  pump at junction {:g} degC: peak {:.1f} nm, FWHM {:.1f} nm (25 degC: {:.1f} nm, {:.1f} nm)\n", r.junction_temperature_C,
                     r.pump_peak_nm, r.pump_fwhm_nm, rep.room.pump_peak_nm, rep.room.pump_fwhm_nm);
    o += fmt::format("  package: {} top, chip {:.0f} % of the bottom, chip absorbs {:.4f} W of the package loss\n", top_name(d),
                     100 * d.chip_area_fraction, r.chip_loss_W);
    o += fmt::format("  energy: pump {:.4f} W = leaked {:.4f} + converted {:.4f}\n", r.pump_power_W, r.leaked_pump_W, r.converted_W);
    o += fmt::format("          + losses: Stokes {:.4f}, quantum {:.4f}, package {:.4f}\n", r.stokes_loss_W, r.quantum_loss_W, r.package_loss_W);
    o += fmt::format("  photons: 1 = leaked {:.4f} + escaping {:.4f} + lost {:.4f} + package {:.4f}\n", r.pump_photons_leaked,
                     r.photons_escaping, r.photons_lost, r.photons_package);
    o += r.photons > 0 ? fmt::format("  transport: photon Monte Carlo, {} photons, seed {}\n", r.photons, r.seed)
                       : std::string("  transport: two-flux (sublayered Kubelka-Munk)\n");
    o += fmt::format("  25 degC: x {:.4f} y {:.4f}   {:g} degC: x {:.4f} y {:.4f}   shift {:.2f} MacAdam steps\n",
                     rep.room.assessment.xy.x, rep.room.assessment.xy.y, r.temperature_C, r.assessment.xy.x, r.assessment.xy.y, rep.shift_steps);
    const std::string a = assessment_text(r.assessment);
    o += a.substr(a.find('\n') + 1);
    if (!d.calibration.empty())
        o += wrap_text(fmt::format("{} (kappa x its mass absorption scale, the grains' scattering x its scattering scale, each listed phosphor's QE x "
                                   "its brightness factor)", d.calibration), 100, "  calibrated model: ", "    ");
    for (const auto& n : d.calibration_notes) o += wrap_text(n, 100, "  note: ", "    ");
    const std::string caution = layer_caution(rep);
    // Wrapped at 100 columns: a one-line caution of 300+ characters is not read.
    if (!caution.empty()) o += wrap_text(caution, 100, "  CAUTION: ", "           ");
    return o;
}

std::string layer_caution(const LayerEvaluation& rep) {
    if (!leak_needs_caution(rep.operating, rep.design.pump.peak_nm)) return "";
    return fmt::format("{:.1f} mW of UV/violet pump light (below 420 nm) leaks from this layer at {:g} W pump. UV and violet light is a "
                       "photobiological hazard to eyes and skin: assess the product to IEC 62471 (photobiological safety of lamps), "
                       "shield and label it, and follow local codes and licensed practice.",
                       1e3 * rep.operating.leaked_uv_violet_W, rep.design.pump_power_W);
}

}  // namespace lampwright
