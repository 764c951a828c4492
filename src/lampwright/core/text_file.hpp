#pragma once
// Reading a whole input file, with an error that names it.
#include <cstdint>
#include <string>

namespace lampwright {

// The largest file read_text_file accepts. A 10,000-spectrum lot at 1 nm, 380-780 nm, as CSV is
// about 40 MB, so 512 MiB is far above any real input; the limit keeps a wrong argument (a disk
// image, a log) from using up the memory.
inline constexpr std::uint64_t kMaxTextFileBytes = std::uint64_t{512} << 20;

// The whole content of a regular file; InputError when it is a folder, a FIFO, a socket or a
// device (which could block or never end), larger than kMaxTextFileBytes, missing or unreadable.
std::string read_text_file(const std::string& path);

}  // namespace lampwright
