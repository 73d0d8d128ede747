// UsageError — an option or value the program was asked to use wrongly (exit code 2 rather than 1).
#pragma once

#include "pitch/base/error.h"

namespace beatless {

class UsageError : public Error {
public:
    using Error::Error;
};

}  // namespace beatless
