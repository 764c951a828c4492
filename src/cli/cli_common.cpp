#include "cli_common.hpp"

#include <iostream>

namespace lampwright::cli {

Format parse_format(const std::string& s) {
    if (s == "text") return Format::text;
    if (s == "csv") return Format::csv;
    if (s == "json") return Format::json;
    throw UsageError{"--format must be text, csv or json, not '" + s + "'"};
}

void print_error(const std::string& message) { std::cerr << "lampwright: error: " << message << '\n'; }
void print_warning(const std::string& message) { std::cerr << "lampwright: warning: " << message << '\n'; }

}  // namespace lampwright::cli
