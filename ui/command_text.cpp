// Small text helpers shared by the commands and the screens (commands.h).
#include "ui/commands.h"

namespace beatless::ui {

std::string ordinal(int n) {
    const int m100 = n % 100;
    const char* suffix = (m100 >= 11 && m100 <= 13) ? "th" : n % 10 == 1 ? "st" : n % 10 == 2 ? "nd" : n % 10 == 3 ? "rd" : "th";
    return std::to_string(n) + suffix;
}

std::string join_args(const std::vector<std::string>& args) {
    std::string s;
    for (const auto& a : args) {
        if (!s.empty()) s += ' ';
        s += a;
    }
    return s;
}

}  // namespace beatless::ui
