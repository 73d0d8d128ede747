// Error — the one exception type the project throws.
//
// Setup and parsing code throws beatless::Error with a one-line message that
// names the thing (file, device, value) and what is wrong with it, so the
// program can print it unchanged and exit with code 1. Hot paths and audio
// callbacks never throw.
#pragma once

#include <stdexcept>
#include <string>

namespace beatless {

class Error : public std::runtime_error {
public:
    using std::runtime_error::runtime_error;
};

}  // namespace beatless
