// Small text helpers shared by every room: trimming, quoting a user's text for a message, splitting, number formatting.
#pragma once

#include <string>
#include <string_view>

namespace beatless::pitch {

inline std::string_view trim(std::string_view s) {
    const auto b = s.find_first_not_of(" \t\r\n");
    if (b == std::string_view::npos) return {};
    const auto e = s.find_last_not_of(" \t\r\n");
    return s.substr(b, e - b + 1);
}

// Text from a file made safe for a terminal: the control characters of
// ECMA-48 (C0 0x00-0x1F, DEL 0x7F, and C1 U+0080-U+009F as UTF-8) are written
// as \xHH (C1 as \u0080..\u009F), so ESC and BEL sequences never reach the
// terminal. Everything else, UTF-8 included, is kept.
std::string printable(std::string_view s);

// Quotes a user's text for an error message (printable), shortening very long input.
inline std::string quote(std::string_view s) {
    std::string out = "'";
    if (s.size() > 60) {
        out += printable(s.substr(0, 57));
        out += "...";
    } else {
        out += printable(s);
    }
    out += "'";
    return out;
}

// Calls f(part) for each part of s between separators (parts may be empty).
template <class F>
void for_each_part(std::string_view s, char sep, F&& f) {
    std::size_t start = 0;
    while (true) {
        const auto at = s.find(sep, start);
        f(s.substr(start, at == std::string_view::npos ? std::string_view::npos : at - start));
        if (at == std::string_view::npos) return;
        start = at + 1;
    }
}

// Formats a double with up to `decimals` places, trailing zeros removed.
std::string format_trimmed(double v, int decimals);

}  // namespace beatless::pitch
