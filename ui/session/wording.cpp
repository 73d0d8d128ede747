// Words shared by the commands and the screens (wording.h).
#include "ui/session/wording.h"

#include "pitch/theory/beats.h"

namespace beatless::ui {

std::string beat_heard_word(double beat_hz, bool drone_sounds) {
    const pitch::BeatBand band = pitch::beat_band(beat_hz);
    if (band == pitch::BeatBand::none) return "-";
    if (!drone_sounds) return "no drone";
    switch (band) {
        case pitch::BeatBand::still: return "still";
        case pitch::BeatBand::countable: return "countable";
        case pitch::BeatBand::flutter: return "flutter";
        case pitch::BeatBand::rough: return "rough";
        case pitch::BeatBand::none: break;
    }
    return "-";
}

std::string ordinal(int n) {
    const int m100 = n % 100;
    const char* suffix = (m100 >= 11 && m100 <= 13) ? "th" : n % 10 == 1 ? "st" : n % 10 == 2 ? "nd" : n % 10 == 3 ? "rd" : "th";
    return std::to_string(n) + suffix;
}

}  // namespace beatless::ui
