#pragma once
// Presenting assessments: a table a person reads, CSV rows, JSON objects. The CSV and JSON keys
// are the same and stable: name,x,y,u_prime,v_prime,cct_K,duv,Ra,R1..R14,ler_lm_per_W, then
// X,Y,Z, CIE 1960 u,v, dc, reference, peak_nm, centroid_nm, fwhm_nm, dominant_nm, purity, observer.
#include "lampwright/assessment.hpp"

#include <nlohmann/json.hpp>

#include <string>
#include <vector>

namespace lampwright {

std::vector<std::string> assessment_columns();
std::vector<std::string> assessment_values(const Assessment& a);  // CSV cells; empty where not defined
nlohmann::ordered_json assessment_json(const Assessment& a);
std::string assessment_text(const Assessment& a);

// A number with fixed decimals for tables and CSV; `missing` where it is not finite (undefined).
std::string format_fixed(double v, int decimals, const char* missing = "");

// One CSV row from cells: quotes a cell holding a comma, quote or newline (RFC 4180).
std::string csv_line(const std::vector<std::string>& cells);

}  // namespace lampwright
