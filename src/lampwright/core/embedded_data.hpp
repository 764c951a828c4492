#pragma once
// The project's data/ tables, compiled into the library (see cmake/EmbedData.cmake).
#include <span>
#include <string_view>

namespace lampwright {

struct EmbeddedFile {
    std::string_view path;  // relative to data/, e.g. "cie/cie1931_2deg_cmf.csv"
    std::string_view content;
};

std::span<const EmbeddedFile> embedded_files();

// The content of one embedded data file; throws lampwright::Error when it is absent.
std::string_view embedded_file(std::string_view path);

}  // namespace lampwright
