// QuietStderr: dup/dup2 around /dev/null.
#include "audio/quiet_stderr.h"

#include <fcntl.h>
#include <unistd.h>
#include <cstdio>

namespace beatless::audio::detail {

QuietStderr::QuietStderr() {
    std::fflush(stderr);
    saved_ = ::fcntl(2, F_DUPFD_CLOEXEC, 3);
    const int null = ::open("/dev/null", O_WRONLY | O_CLOEXEC);
    if (saved_ >= 0 && null >= 0) ::dup2(null, 2);
    if (null >= 0) ::close(null);
}

QuietStderr::~QuietStderr() {
    std::fflush(stderr);
    if (saved_ >= 0) {
        ::dup2(saved_, 2);
        ::close(saved_);
    }
}

}  // namespace beatless::audio::detail
