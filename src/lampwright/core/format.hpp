#pragma once
// Number and cell formatting shared by every text, CSV and JSON output (and the JSON that the
// lot history stores).
#include <nlohmann/json.hpp>

#include <string>
#include <vector>

namespace lampwright {

// A number with fixed decimals for tables, axes and CSV; `missing` where it is not finite
// (undefined). A value that rounds to zero prints without a minus sign ("0.0000", never "-0.0000"):
// every fixed-decimal number of the text, SVG and CSV outputs goes through here.
std::string format_fixed(double v, int decimals, const char* missing = "");
// The same with the sign always shown ("+0.0012", "-0.0012"), as for Duv; a value that rounds to
// zero has no sign ("0.0000").
std::string format_signed(double v, int decimals, const char* missing = "");

// `text` broken at spaces into lines of at most `width` columns (a word longer than that stands
// alone): the first line starts with `first`, the others with `indent`; each line ends in '\n'.
// Columns count UTF-8 characters, not bytes.
std::string wrap_text(const std::string& text, std::size_t width, const std::string& first = "", const std::string& indent = "");

// One CSV row from cells: quotes a cell holding a comma, quote or newline (RFC 4180).
std::string csv_line(const std::vector<std::string>& cells);

// A JSON number, or null where the value is not finite (undefined).
nlohmann::ordered_json number_or_null(double v);

}  // namespace lampwright
