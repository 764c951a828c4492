#pragma once
// Writing an output file so that it is either wholly new or wholly old: the content goes to a
// temporary file in the same folder, every write and the close are checked, the data is flushed to
// the disk, and only then is the temporary renamed over the target (rename(2) is atomic within one
// file system, POSIX.1-2017). A full disk or a killed process therefore never leaves a truncated
// file, and an old file of that name survives a failed write.
#include "lampwright/core/error.hpp"

#include <string>
#include <string_view>
#include <vector>

namespace lampwright {

// An output file could not be written (disk full, no permission, missing folder...).
class OutputError : public Error {
public:
    OutputError(std::string path, std::string problem);
    const std::string& path() const { return path_; }

private:
    std::string path_;
};

// Writes `content` to `path` atomically (see above); throws OutputError naming the file and the
// system's reason, after removing the temporary file.
void write_file_atomically(const std::string& path, std::string_view content);

// One file the command reads or writes, for the same-file check below.
struct FileRole {
    std::string path;
    std::string role;  // how the user gave it, e.g. "the recipe", "--svg", "the history database"
};

// Throws OutputError when an output names the same file as an input, the database or another
// output (by device and inode where the file exists, else by its absolute, normalised path).
// Inputs that are folders stand for every file in them (a QC lot folder), so an output that would
// replace a lamp file of the lot is refused too.
void refuse_output_over_input(const std::vector<FileRole>& outputs, const std::vector<FileRole>& inputs);

}  // namespace lampwright
