// Command-line value parsers — see option_parsers.h.
#include "ui/session/option_parsers.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/notes.h"
#include "ui/session/settings.h"

#include <cstdio>

namespace beatless::ui {

double parse_lowest(const std::string& text, double a4_hz) {
    const double hz = pitch::parse_frequency(text, a4_hz);
    if (!(hz >= kLowestMinHz && hz <= kLowestMaxHz))
        throw Error("--lowest " + pitch::printable(text) + " = " + pitch::format_trimmed(hz, 1) +
                    " Hz: out of range (" + pitch::format_trimmed(kLowestMinHz, 0) + " to " +
                    pitch::format_trimmed(kLowestMaxHz, 0) + " Hz)");
    return hz;
}

void parse_size(const std::string& text, int& width_px, int& height_px) {
    int w = 0, h = 0;
    char x = 0;
    if (std::sscanf(text.c_str(), "%d%c%d", &w, &x, &h) != 3 || (x != 'x' && x != 'X') || w < 320 || h < 240 ||
        w > 7680 || h > 4320)
        throw Error("--size " + pitch::printable(text) + ": expected WIDTHxHEIGHT between 320x240 and 7680x4320");
    width_px = w;
    height_px = h;
}

}  // namespace beatless::ui
