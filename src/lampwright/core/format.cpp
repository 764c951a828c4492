#include "lampwright/core/format.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

namespace lampwright {

namespace {

// True when the formatted number has no non-zero digit ("-0.000" is zero).
bool all_zero_digits(const std::string& s) { return s.find_first_of("123456789") == std::string::npos; }

std::size_t columns(const std::string& s) {
    std::size_t n = 0;
    for (unsigned char c : s) n += (c & 0xC0) != 0x80;  // UTF-8 continuation bytes take no column
    return n;
}

}  // namespace

std::string format_fixed(double v, int decimals, const char* missing) {
    if (!std::isfinite(v)) return missing;
    std::string s = fmt::format("{:.{}f}", v, decimals);
    if (s.front() == '-' && all_zero_digits(s)) s.erase(0, 1);
    return s;
}

std::string format_signed(double v, int decimals, const char* missing) {
    if (!std::isfinite(v)) return missing;
    std::string s = format_fixed(v, decimals);
    return all_zero_digits(s) || s.front() == '-' ? s : "+" + s;
}

std::string wrap_text(const std::string& text, std::size_t width, const std::string& first, const std::string& indent) {
    std::string out, line = first;
    std::size_t line_cols = columns(first), words = 0;
    const std::size_t indent_cols = columns(indent);
    std::size_t i = 0;
    while (i < text.size()) {
        while (i < text.size() && text[i] == ' ') ++i;
        if (i >= text.size()) break;
        const std::size_t end = std::min(text.find(' ', i), text.size());
        const std::string word = text.substr(i, end - i);
        i = end;
        const std::size_t w = columns(word);
        if (words > 0 && line_cols + 1 + w > width) {
            out += line + '\n';
            line = indent + word;
            line_cols = indent_cols + w;
        } else {
            line += (words > 0 ? " " : "") + word;
            line_cols += (words > 0 ? 1 : 0) + w;
        }
        ++words;
    }
    return out + line + '\n';
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
