#pragma once
// Number and cell formatting shared by every text, CSV and JSON output (and the JSON that the
// lot history stores).
#include <nlohmann/json.hpp>

#include <string>
#include <vector>

namespace lampwright {

// A number with fixed decimals for tables and CSV; `missing` where it is not finite (undefined).
std::string format_fixed(double v, int decimals, const char* missing = "");

// One CSV row from cells: quotes a cell holding a comma, quote or newline (RFC 4180).
std::string csv_line(const std::vector<std::string>& cells);

// A JSON number, or null where the value is not finite (undefined).
nlohmann::ordered_json number_or_null(double v);

}  // namespace lampwright
