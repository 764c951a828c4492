#pragma once
// The drift diagnosis of a lot (production/lot_diagnosis.hpp) as text, JSON, CSV columns of the
// lamp rows, and an HTML section with two small SVG charts: each component's mass fraction in the
// recipe and in the lot (error bars: +-2 standard errors), and the change with the same bars.
#include "lampwright/production/lot_diagnosis.hpp"

#include <nlohmann/json.hpp>

#include <string>
#include <vector>

namespace lampwright {

std::string drift_text(const DriftDiagnosis& d, const std::string& recipe_path);
nlohmann::ordered_json drift_json(const DriftDiagnosis& d, const std::string& recipe_path);
// Columns added to qc's lamp rows with --recipe: unmix_residual, then u<i>_label, u<i>_mass_fraction.
std::vector<std::string> drift_lamp_columns(const DriftDiagnosis& d);
std::vector<std::string> drift_lamp_values(const DriftDiagnosis& d, std::size_t lamp);
// The <section id="drift"> of the QC report.
std::string drift_html(const DriftDiagnosis& d, const std::string& recipe_path);
// The share chart alone (id "drift-chart"), and the change chart (id "drift-change-chart").
std::string drift_share_svg(const DriftDiagnosis& d);
std::string drift_change_svg(const DriftDiagnosis& d);

}  // namespace lampwright
