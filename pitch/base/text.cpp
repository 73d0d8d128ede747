// Small text helpers (text.h).
#include "pitch/base/text.h"

#include <charconv>
#include <cstdio>

namespace beatless::pitch {

std::string format_trimmed(double v, int decimals) {
    // std::to_chars with a precision writes what printf's "%.*f" writes (C++20 [charconv.to.chars]), without the
    // locale and format parsing; a value longer than the 63 characters printf writes here falls back to it (cut as before).
    char buf[64];
    const auto [end, ec] = std::to_chars(buf, buf + sizeof buf - 1, v, std::chars_format::fixed, decimals);
    std::string s;
    if (ec == std::errc()) {
        s.assign(buf, end);
    } else {
        std::snprintf(buf, sizeof buf, "%.*f", decimals, v);
        s = buf;
    }
    if (s.find('.') != std::string::npos) {
        while (!s.empty() && s.back() == '0') s.pop_back();
        if (!s.empty() && s.back() == '.') s.pop_back();
    }
    if (s == "-0") s = "0";
    return s;
}

std::string printable(std::string_view s) {
    std::string out;
    out.reserve(s.size());
    char buf[8];
    for (std::size_t i = 0; i < s.size(); ++i) {
        const auto c = static_cast<unsigned char>(s[i]);
        if (c < 0x20 || c == 0x7f) {
            std::snprintf(buf, sizeof buf, "\\x%02x", c);
            out += buf;
        } else if (c == 0xc2 && i + 1 < s.size() && static_cast<unsigned char>(s[i + 1]) >= 0x80 &&
                   static_cast<unsigned char>(s[i + 1]) <= 0x9f) {
            std::snprintf(buf, sizeof buf, "\\u%04x", static_cast<unsigned char>(s[i + 1]));
            out += buf;
            ++i;
        } else {
            out += static_cast<char>(c);
        }
    }
    return out;
}

}  // namespace beatless::pitch
