#pragma once
// Text that enters the program from outside (spectrum headers, file names, the lot history) and
// leaves it as JSON, CSV or HTML must be valid UTF-8: nlohmann::json refuses to write anything
// else, so one stray byte of a Latin-1 header would fail a whole run's JSON.
#include <nlohmann/json.hpp>

#include <string>
#include <string_view>

namespace lampwright {

// `s` with every byte that is not part of a well-formed UTF-8 sequence (RFC 3629: no overlong
// forms, no surrogates, nothing above U+10FFFF) replaced by U+FFFD, the replacement character, so
// the damage stays visible ("lamp\xFF" -> "lamp\uFFFD"). Valid text is returned unchanged.
std::string sanitize_utf8(std::string_view s);

// `j` as JSON text (indented by `indent`, or compact when negative); any invalid UTF-8 that got
// past sanitize_utf8 is written as U+FFFD instead of throwing (a second guard).
std::string dump_json(const nlohmann::ordered_json& j, int indent = 2);
std::string dump_json(const nlohmann::json& j, int indent = -1);

}  // namespace lampwright
