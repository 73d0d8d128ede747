// Safe files — see safe_file.h.
#include "ui/session/safe_file.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>
#include <cerrno>
#include <cstdio>
#include <cstring>

namespace beatless::ui {

namespace fs = std::filesystem;

namespace {

std::string errno_text(int err) { return std::string(" (") + std::strerror(err) + ")"; }

// What a file that is not a regular file or folder is, in words; empty for a regular file.
std::string kind_words(mode_t mode) {
    if (S_ISREG(mode)) return {};
    if (S_ISDIR(mode)) return "a folder";
    if (S_ISCHR(mode) || S_ISBLK(mode)) return "a device";
    if (S_ISFIFO(mode)) return "a named pipe (FIFO)";
    if (S_ISSOCK(mode)) return "a socket";
    return "not a regular file";
}

std::string mb_text(double bytes) { return pitch::format_trimmed(bytes / (1024.0 * 1024.0), 1) + " MB"; }

// True when `path` is, through its chain of links, an anonymous pipe
// (bash's <(...), /dev/stdin on a pipe): a pipe the user meant.
bool is_anonymous_pipe(const fs::path& path) {
    fs::path p = path;
    for (int hop = 0; hop < 8; ++hop) {
        std::error_code ec;
        if (!fs::is_symlink(p, ec)) return false;
        const fs::path next = fs::read_symlink(p, ec);
        if (ec) return false;
        if (next.native().rfind("pipe:", 0) == 0) return true;
        p = next.is_absolute() ? next : p.parent_path() / next;
    }
    return false;
}

}  // namespace

// [SECTION] Outputs

fs::path check_output_path(const fs::path& target) {
    const std::string name = target.string();
    if (name.empty()) throw Error("an empty file name cannot be written");
    fs::path real = target;
    struct stat st {};
    if (::lstat(name.c_str(), &st) == 0 && S_ISLNK(st.st_mode)) {
        std::error_code ec;
        real = fs::canonical(target, ec);
        if (ec) throw Error(name + ": is a symbolic link to nothing (" + fs::read_symlink(target, ec).string() + ")");
    }
    if (::stat(real.c_str(), &st) == 0) {
        const std::string kind = kind_words(st.st_mode);
        if (!kind.empty()) throw Error(name + ": is " + kind + ", not a file; give a file name");
        return real;
    }
    const int err = errno;
    const fs::path parent = real.has_parent_path() ? real.parent_path() : fs::path(".");
    struct stat pst {};
    if (::stat(parent.c_str(), &pst) != 0) {
        if (errno == ENOENT)
            throw Error(name + ": the folder " + parent.string() + " does not exist (create it first)");
        if (errno == ENOTDIR) throw Error(name + ": " + parent.string() + " is not a folder");
        throw Error(name + ": cannot be written" + errno_text(errno));
    }
    if (!S_ISDIR(pst.st_mode)) throw Error(name + ": " + parent.string() + " is not a folder");
    if (err != ENOENT) throw Error(name + ": cannot be written" + errno_text(err));
    return real;
}

SafeOutput::SafeOutput(const fs::path& target) : target_(target.string()) {
    const fs::path real = check_output_path(target);
    final_ = real.string();
    const fs::path dir = real.has_parent_path() ? real.parent_path() : fs::path(".");
    std::string pattern = (dir / ("." + real.filename().string() + ".XXXXXX")).string();
    fd_ = ::mkstemp(pattern.data());
    if (fd_ < 0) throw Error(target_ + ": cannot be written" + errno_text(errno));
    temp_ = pattern;
    // The new file gets the mode the old one had, or the usual one for a new file.
    struct stat st {};
    mode_t mode = 0;
    if (::stat(final_.c_str(), &st) == 0) {
        mode = st.st_mode & 07777;
    } else {
        const mode_t mask = ::umask(0);
        ::umask(mask);
        mode = 0666 & ~mask;
    }
    ::fchmod(fd_, mode);
}

SafeOutput::~SafeOutput() {
    if (fd_ >= 0) ::close(fd_);
    if (!done_ && !temp_.empty()) ::unlink(temp_.c_str());
}

void SafeOutput::write(std::string_view bytes) {
    if (fd_ < 0) throw Error(target_ + ": already closed");
    while (!bytes.empty()) {
        const ssize_t n = ::write(fd_, bytes.data(), bytes.size());
        if (n < 0) {
            if (errno == EINTR) continue;
            throw Error(target_ + ": cannot be written" + errno_text(errno));
        }
        bytes.remove_prefix(static_cast<std::size_t>(n));
    }
}

void SafeOutput::commit() {
    if (fd_ < 0 || done_) throw Error(target_ + ": already closed");
    // fsync and close report what the writes could not (delayed allocation, quotas).
    const bool synced = ::fsync(fd_) == 0;
    const int sync_err = errno;
    const int fd = fd_;
    fd_ = -1;
    if (!synced && sync_err != EINVAL) {
        ::close(fd);
        throw Error(target_ + ": cannot be written" + errno_text(sync_err));
    }
    if (::close(fd) != 0) throw Error(target_ + ": cannot be written" + errno_text(errno));
    // A writer that opened the temporary itself may have hit a file-size limit
    // without saying so; a short file is caught by that writer's own checks.
    if (::rename(temp_.c_str(), final_.c_str()) != 0) throw Error(target_ + ": cannot be replaced" + errno_text(errno));
    done_ = true;
}

void write_file_safely(const fs::path& target, std::string_view bytes) {
    SafeOutput out(target);
    out.write(bytes);
    out.commit();
}

// [SECTION] Inputs

std::string read_text_file(const std::string& path, std::size_t limit_bytes, std::string_view what) {
    const std::string w(what);
    struct stat st {};
    if (::stat(path.c_str(), &st) != 0) {
        if (errno == ENOENT) throw Error(path + ": no such file");
        throw Error(path + ": cannot be read" + errno_text(errno));
    }
    const bool pipe = S_ISFIFO(st.st_mode) && is_anonymous_pipe(path);
    if (!S_ISREG(st.st_mode) && !pipe) {
        std::string msg = path + ": is " + kind_words(st.st_mode) + ", not a " + w;
        if (S_ISFIFO(st.st_mode)) msg += "; save it to a file, or pass it as <(command)";
        throw Error(msg);
    }
    const std::string limit = mb_text(static_cast<double>(limit_bytes));
    if (S_ISREG(st.st_mode) && static_cast<std::uintmax_t>(st.st_size) > limit_bytes)
        throw Error(path + ": too large (" + mb_text(static_cast<double>(st.st_size)) + ", limit " + limit + ")");
    const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
    if (fd < 0) throw Error(path + ": cannot be read" + errno_text(errno));
    std::string text;
    char buf[65536];
    for (;;) {
        const ssize_t n = ::read(fd, buf, sizeof buf);
        if (n < 0) {
            if (errno == EINTR) continue;
            const int err = errno;
            ::close(fd);
            throw Error(path + ": cannot be read" + errno_text(err));
        }
        if (n == 0) break;
        if (text.size() + static_cast<std::size_t>(n) > limit_bytes) {
            ::close(fd);
            throw Error(path + ": too large (more than " + limit + ", limit " + limit + ")");
        }
        text.append(buf, static_cast<std::size_t>(n));
    }
    ::close(fd);
    return text;
}

}  // namespace beatless::ui
