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
// One line: "luminous flux 1234.5 lm   efficacy 85.3 lm/W at 14.50 W", or "relative spectrum: no flux".
std::string photometry_text(const Assessment& a);

}  // namespace lampwright
