#pragma once
// Reading a whole input file, with an error that names it.
#include <string>

namespace lampwright {

// The whole content of a file; InputError when it is a folder, missing or unreadable.
std::string read_text_file(const std::string& path);

}  // namespace lampwright
