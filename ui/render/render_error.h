// RenderError — a window, font or image that cannot be made, with a one-line message naming it.
#pragma once

#include <stdexcept>

namespace beatless::ui {

class RenderError : public std::runtime_error {
public:
    using std::runtime_error::runtime_error;
};

}  // namespace beatless::ui
