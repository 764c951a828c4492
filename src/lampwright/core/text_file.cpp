#include "lampwright/core/text_file.hpp"

#include "lampwright/core/error.hpp"

#include <fmt/format.h>

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>

namespace lampwright {

namespace {

// What a file that is not a regular file is, for the message.
const char* file_kind(mode_t mode) {
    if (S_ISDIR(mode)) return "a folder";
    if (S_ISFIFO(mode)) return "a FIFO";
    if (S_ISSOCK(mode)) return "a socket";
    if (S_ISCHR(mode)) return "a character device";
    if (S_ISBLK(mode)) return "a block device";
    return "not a plain file";
}

// Closes the descriptor on every path out of read_text_file.
struct FdGuard {
    int fd;
    ~FdGuard() { ::close(fd); }
};

}  // namespace

std::string read_text_file(const std::string& path) {
    // Opened without blocking: opening a FIFO for reading otherwise waits for a writer forever.
    // The checks are made on the opened descriptor (fstat), so the file cannot change between
    // the check and the read.
    const int fd = ::open(path.c_str(), O_RDONLY | O_NONBLOCK | O_CLOEXEC);
    if (fd < 0) {
        const int err = errno;
        struct stat st {};
        if (::stat(path.c_str(), &st) == 0 && S_ISDIR(st.st_mode)) throw InputError(path, 0, "is a folder, not a file");
        throw InputError(path, 0, fmt::format("cannot be opened (missing or unreadable: {})", std::strerror(err)));
    }
    const FdGuard guard{fd};
    struct stat st {};
    if (::fstat(fd, &st) != 0) throw InputError(path, 0, fmt::format("cannot be read: {}", std::strerror(errno)));
    if (S_ISDIR(st.st_mode)) throw InputError(path, 0, "is a folder, not a file");
    if (!S_ISREG(st.st_mode)) throw InputError(path, 0, fmt::format("is not a regular file ({})", file_kind(st.st_mode)));
    const auto size = static_cast<std::uint64_t>(st.st_size);
    if (size > kMaxTextFileBytes)
        throw InputError(path, 0, fmt::format("is larger than {} MiB ({} MiB); no spectrum, recipe or spec file is that big", kMaxTextFileBytes >> 20,
                                              size >> 20));
    // Regular files never block; clear O_NONBLOCK anyway so reads behave as usual.
    ::fcntl(fd, F_SETFL, ::fcntl(fd, F_GETFL) & ~O_NONBLOCK);
    std::string content;
    content.reserve(static_cast<std::size_t>(size));
    char buf[1 << 16];
    while (true) {
        const ssize_t got = ::read(fd, buf, sizeof buf);
        if (got < 0) {
            if (errno == EINTR) continue;
            throw InputError(path, 0, fmt::format("could not be read: {}", std::strerror(errno)));
        }
        if (got == 0) break;
        content.append(buf, static_cast<std::size_t>(got));
        // A file that grows while it is read (a log being written) is held to the same limit.
        if (content.size() > kMaxTextFileBytes)
            throw InputError(path, 0, fmt::format("is larger than {} MiB; no spectrum, recipe or spec file is that big", kMaxTextFileBytes >> 20));
    }
    return content;
}

}  // namespace lampwright
