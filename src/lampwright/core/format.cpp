#include "lampwright/core/format.hpp"

#include <fmt/format.h>

#include <cmath>

namespace lampwright {

std::string format_fixed(double v, int decimals, const char* missing) {
    if (!std::isfinite(v)) return missing;
    return fmt::format("{:.{}f}", v, decimals);
}

std::string csv_line(const std::vector<std::string>& cells) {
    std::string out;
    for (std::size_t i = 0; i < cells.size(); ++i) {
        if (i) out += ',';
        const auto& c = cells[i];
        if (c.find_first_of(",\"\n") != std::string::npos) {
            out += '"';
            for (char ch : c) {
                if (ch == '"') out += '"';
                out += ch;
            }
            out += '"';
        } else {
            out += c;
        }
    }
    return out;
}

nlohmann::ordered_json number_or_null(double v) { return std::isfinite(v) ? nlohmann::ordered_json(v) : nlohmann::ordered_json(nullptr); }

}  // namespace lampwright
