#include "lampwright/io/output_file.hpp"

#include <fmt/format.h>

#include <cerrno>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <optional>

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

namespace lampwright {

OutputError::OutputError(std::string path, std::string problem)
    : Error(fmt::format("{}: {}", path, problem)), path_(std::move(path)) {}

namespace {

namespace fs = std::filesystem;

std::string system_reason(int err) { return std::strerror(err); }

// Removes the temporary file on every path that does not end in the rename.
struct TemporaryFile {
    std::string path;
    int fd = -1;
    bool renamed = false;
    ~TemporaryFile() {
        if (fd >= 0) ::close(fd);
        if (!renamed && !path.empty()) ::unlink(path.c_str());
    }
};

void write_all(int fd, std::string_view content, const std::string& target) {
    const char* p = content.data();
    std::size_t left = content.size();
    while (left > 0) {
        const ssize_t n = ::write(fd, p, left);
        if (n < 0) {
            if (errno == EINTR) continue;
            throw OutputError(target, fmt::format("could not be written: {}; the old file, if any, is unchanged", system_reason(errno)));
        }
        p += n;
        left -= static_cast<std::size_t>(n);
    }
}

// The mode a newly created file gets from the user's umask (mkstemp creates 0600).
mode_t new_file_mode() {
    const mode_t mask = ::umask(0);
    ::umask(mask);
    return static_cast<mode_t>(0666 & ~mask);
}

// A device or pipe the user named (/dev/stdout, a FIFO): written in place, every write checked, as
// it cannot be replaced by a rename (and must not be: renaming over /dev/full would remove the device).
void write_special_file(const std::string& path, std::string_view content) {
    const int fd = ::open(path.c_str(), O_WRONLY | O_CLOEXEC);
    if (fd < 0) throw OutputError(path, fmt::format("cannot be written: {}", system_reason(errno)));
    TemporaryFile guard;  // closes fd on error; no path, so nothing is unlinked
    guard.fd = fd;
    write_all(fd, content, path);
    guard.fd = -1;
    if (::close(fd) != 0) throw OutputError(path, fmt::format("could not be written: {}", system_reason(errno)));
}

}  // namespace

void write_file_atomically(const std::string& path_given, std::string_view content) {
    if (path_given.empty()) throw OutputError(path_given, "an empty file name");
    std::error_code ec;
    const fs::file_status st = fs::status(path_given, ec);
    if (fs::is_directory(st)) throw OutputError(path_given, "is a folder, not a file");
    if (fs::exists(st) && !fs::is_regular_file(st)) return write_special_file(path_given, content);
    // A symbolic link keeps pointing at the file it names: the new content replaces that file.
    std::string path = path_given;
    if (fs::is_symlink(fs::symlink_status(path_given, ec))) {
        const fs::path resolved = fs::weakly_canonical(path_given, ec);
        if (!ec) path = resolved.string();
    }
    const fs::path target(path);
    const fs::path folder = target.has_parent_path() ? target.parent_path() : fs::path(".");
    TemporaryFile tmp;
    std::string name = (folder / fmt::format(".{}.tmp-XXXXXX", target.filename().string())).string();
    tmp.fd = ::mkstemp(name.data());
    if (tmp.fd < 0) throw OutputError(path_given, fmt::format("cannot be written: {} (creating a temporary file in {})", system_reason(errno), folder.string()));
    tmp.path = name;

    // An existing file keeps its permissions; a new one gets the usual umask-based mode.
    struct stat old {};
    const mode_t mode = ::stat(path.c_str(), &old) == 0 ? static_cast<mode_t>(old.st_mode & 07777) : new_file_mode();
    ::fchmod(tmp.fd, mode);

    write_all(tmp.fd, content, path);
    if (::fsync(tmp.fd) != 0 && errno != EINVAL && errno != EROFS)
        throw OutputError(path, fmt::format("could not be written: {}; the old file, if any, is unchanged", system_reason(errno)));
    const int fd = tmp.fd;
    tmp.fd = -1;
    if (::close(fd) != 0) throw OutputError(path, fmt::format("could not be written: {}; the old file, if any, is unchanged", system_reason(errno)));
    if (::rename(tmp.path.c_str(), path.c_str()) != 0)
        throw OutputError(path, fmt::format("could not be replaced: {}; the old file, if any, is unchanged", system_reason(errno)));
    tmp.renamed = true;
}

namespace {

struct Identity {
    std::optional<std::pair<dev_t, ino_t>> inode;
    std::string absolute;  // normalised absolute path
};

Identity identity_of(const std::string& path) {
    Identity id;
    std::error_code ec;
    fs::path p = fs::weakly_canonical(fs::absolute(path, ec), ec);
    id.absolute = ec ? fs::absolute(path).lexically_normal().string() : p.string();
    struct stat st {};
    if (::stat(path.c_str(), &st) == 0) id.inode = std::make_pair(st.st_dev, st.st_ino);
    return id;
}

bool same_file(const Identity& a, const Identity& b) {
    if (a.inode && b.inode) return *a.inode == *b.inode;
    return a.absolute == b.absolute;
}

void refuse(const FileRole& out, const FileRole& in, const std::string& detail = "") {
    throw OutputError(out.path, fmt::format("{} names the same file as {} ({}{}); refusing to overwrite it — choose another output file", out.role,
                                            in.role, in.path, detail));
}

}  // namespace

void refuse_output_over_input(const std::vector<FileRole>& outputs, const std::vector<FileRole>& inputs) {
    for (std::size_t i = 0; i < outputs.size(); ++i) {
        const FileRole& out = outputs[i];
        if (out.path.empty() || out.path == "-") continue;
        const Identity o = identity_of(out.path);
        for (const FileRole& in : inputs) {
            if (in.path.empty() || in.path == "-") continue;
            const Identity id = identity_of(in.path);
            if (same_file(o, id)) refuse(out, in);
            std::error_code ec;
            if (!fs::is_directory(in.path, ec)) continue;
            // A folder input: its files are inputs too.
            for (fs::directory_iterator it(in.path, fs::directory_options::skip_permission_denied, ec), end; !ec && it != end; it.increment(ec)) {
                if (same_file(o, identity_of(it->path().string()))) refuse(out, in, ", folder holding " + it->path().filename().string());
            }
        }
        for (std::size_t j = 0; j < i; ++j)
            if (!outputs[j].path.empty() && same_file(o, identity_of(outputs[j].path))) refuse(out, outputs[j]);
    }
}

}  // namespace lampwright
