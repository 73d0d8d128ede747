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
    const char* suffix = (m100 >= 11 && m100 <= 13) ? "th"
                         : n % 10 == 1              ? "st"
                         : n % 10 == 2              ? "nd"
                         : n % 10 == 3              ? "rd"
                                                    : "th";
    return std::to_string(n) + suffix;
}

std::string_view reference_title(pitch::ChordReference r) {
    switch (r) {
        case pitch::ChordReference::fixed_root: return "Drone root";
        case pitch::ChordReference::sounding_bass: return "Sounding bass";
        case pitch::ChordReference::best_fit: return "Best-fit root";
    }
    return "Drone root";
}

std::string_view player_state_word(pitch::PlayerState s) {
    switch (s) {
        case pitch::PlayerState::sounding: return "sounding";
        case pitch::PlayerState::resting: return "resting";
        case pitch::PlayerState::silent: return "silent channel";
        case pitch::PlayerState::copy: return "same voice as";
        case pitch::PlayerState::off_voice: return "other note";
    }
    return "resting";
}

std::string choice_text(audio::ChoiceWhy why, audio::Direction dir) {
    const bool in = dir == audio::Direction::input;
    switch (why) {
        case audio::ChoiceWhy::named: return std::string("the ") + (in ? "input" : "output") + " asked for by name";
        case audio::ChoiceWhy::index: return std::string("the ") + (in ? "input" : "output") + " asked for by index";
        case audio::ChoiceWhy::server_default:
            return std::string("the sound server's default ") + (in ? "source" : "sink");
        case audio::ChoiceWhy::server_first:
            return std::string("the sound server's first ") + (in ? "source" : "sink") +
                   " by name (it has no default set)";
        case audio::ChoiceWhy::host_default:
            return std::string("the host's default ") + (in ? "input" : "output") + " (no sound server default)";
        case audio::ChoiceWhy::first_listed:
            return std::string("the first device with ") + (in ? "inputs" : "outputs") + " (no default is set)";
        case audio::ChoiceWhy::input_device: return "the input's own device";
    }
    return "the default";
}

}  // namespace beatless::ui
