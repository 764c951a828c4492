#include "lampwright/core/embedded_data.hpp"

#include "lampwright/core/error.hpp"

#include <string>

namespace lampwright {

std::string_view embedded_file(std::string_view path) {
    for (const auto& f : embedded_files())
        if (f.path == path) return f.content;
    throw Error("built-in data file data/" + std::string(path) + " is missing from this build");
}

}  // namespace lampwright
