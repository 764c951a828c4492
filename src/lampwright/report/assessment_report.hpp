#pragma once
// Presenting assessments: a table a person reads, CSV rows, JSON objects. The CSV and JSON keys
// are the same and stable: name,x,y,u_prime,v_prime,cct_K,duv,Ra,R1..R14,ler_lm_per_W, then
// X,Y,Z, CIE 1960 u,v, dc, reference, peak_nm, centroid_nm, fwhm_nm, dominant_nm, purity, observer,
// then photometry ("absolute" | "relative"), luminous_flux_lm, electrical_power_W,
// efficacy_lm_per_W (empty in CSV, null in JSON, where the spectrum is relative or has no power).
#include "lampwright/colour/assessment.hpp"
#include "lampwright/core/format.hpp"

#include <nlohmann/json.hpp>

#include <string>
#include <vector>

namespace lampwright {

std::vector<std::string> assessment_columns();
// The photometry columns are the last this many of assessment_columns().
inline constexpr std::ptrdiff_t kPhotometryColumns = 4;
std::vector<std::string> assessment_values(const Assessment& a);  // CSV cells; empty where not defined
nlohmann::ordered_json assessment_json(const Assessment& a);
std::string assessment_text(const Assessment& a);
// CIE 224 / TM-30-20 columns that assess appends after assessment_columns(): Rf, Rg, Rf_h1..16,
// Rcs_h1..16 (per cent), Rhs_h1..16, x10, y10, fidelity_interval_nm, and with `ces` Rf_ces01..99.
// Empty cells (JSON null) where there is no CCT.
std::vector<std::string> fidelity_columns(bool ces);
std::vector<std::string> fidelity_values(const Assessment& a, bool ces);
// The same as JSON keys, inserted before the object's "warnings".
void add_fidelity_json(nlohmann::ordered_json& j, const Assessment& a, bool ces);
// Rf and Rg alone: the columns blend, layer, compare and unmix append at the end of their rows.
std::vector<std::string> fidelity_summary_columns();
std::vector<std::string> fidelity_summary_values(const Assessment& a);
void add_fidelity_summary_json(nlohmann::ordered_json& j, const Assessment& a);  // "Rf", "Rg" at the end
// One text line with Rf and Rg (and the reference), or "" without a CCT.
std::string fidelity_text(const Assessment& a);
// The TM-30-20 colour vector graphic of each assessment, one panel per spectrum, as one SVG.
std::string colour_vector_graphic_svg(const std::vector<Assessment>& assessments);
// The same drawing for one assessment (with a CCT), as an SVG element with the given id, for
// inline use in an HTML report; "" when it has no TM-30 figures.
std::string colour_vector_graphic_svg(const Assessment& assessment, const std::string& id);

// One line: "luminous flux 1234.5 lm   efficacy 85.3 lm/W at 14.50 W", or "relative spectrum: no flux".
std::string photometry_text(const Assessment& a);

}  // namespace lampwright
