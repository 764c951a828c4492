#include "lampwright/core/text_file.hpp"

#include "lampwright/core/error.hpp"

#include <filesystem>
#include <fstream>
#include <sstream>

namespace lampwright {

std::string read_text_file(const std::string& path) {
    std::error_code ec;
    if (std::filesystem::is_directory(path, ec)) throw InputError(path, 0, "is a folder, not a file");
    std::ifstream in(path, std::ios::binary);
    if (!in) throw InputError(path, 0, "cannot be opened (missing or unreadable)");
    std::ostringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

}  // namespace lampwright
