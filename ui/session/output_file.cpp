#include "ui/session/output_file.h"

#include "pitch/base/error.h"

#include <cerrno>
#include <cstring>
#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

namespace beatless::ui {

void write_output_file(const std::string& path, std::string_view bytes) {
    if (path.empty()) throw Error("output file: no name given");
    struct stat st {};
    if (::stat(path.c_str(), &st) == 0) {
        if (S_ISDIR(st.st_mode)) throw Error(path + ": is a folder, not a file to write");
        if (!S_ISREG(st.st_mode)) throw Error(path + ": is a device, pipe or socket, not a file to write");
    }
    std::string tmp;
    int fd = -1;
    for (int attempt = 0; attempt < 100 && fd < 0; ++attempt) {
        tmp = path + ".tmp-" + std::to_string(::getpid()) + "-" + std::to_string(attempt);
        fd = ::open(tmp.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0644);
        if (fd < 0 && errno != EEXIST) throw Error(path + ": cannot be written (" + std::strerror(errno) + ")");
    }
    if (fd < 0) throw Error(path + ": cannot be written (no free temporary name beside it)");
    const char* p = bytes.data();
    std::size_t left = bytes.size();
    int err = 0;
    while (left > 0) {
        const ssize_t n = ::write(fd, p, left);
        if (n < 0 && errno == EINTR) continue;
        if (n <= 0) {
            err = errno ? errno : EIO;
            break;
        }
        p += n;
        left -= static_cast<std::size_t>(n);
    }
    if (!err && ::fsync(fd) != 0) err = errno;
    if (::close(fd) != 0 && !err) err = errno;
    if (!err && ::rename(tmp.c_str(), path.c_str()) != 0) err = errno;
    if (err) {
        ::unlink(tmp.c_str());
        throw Error(path + ": cannot be written (" + std::strerror(err) + ")");
    }
}

}  // namespace beatless::ui
