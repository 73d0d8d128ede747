// Words shared by the commands and the screens (wording.h).
#include "ui/session/wording.h"

#include <cmath>
#include <cstdio>

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

std::string_view blend_key(pitch::Blend b) {
    switch (b) {
        case pitch::Blend::one_series: return "one_series";
        case pitch::Blend::near_unison: return "near_unison";
        case pitch::Blend::octave: return "octave";
        case pitch::Blend::none: break;
    }
    return "";
}

std::string_view blend_words(pitch::Blend b) {
    switch (b) {
        case pitch::Blend::one_series: return "one pitch: a single note, or a unison or octave too close to tell";
        case pitch::Blend::near_unison: return "one pitch: a unison, the two voices too close to tell apart";
        case pitch::Blend::octave: return "one pitch: an octave whose upper voice hides in the lower's partials";
        case pitch::Blend::none: break;
    }
    return "";
}

std::string_view mover_words(pitch::DuoMover m) {
    switch (m) {
        case pitch::DuoMover::low: return "lower voice";
        case pitch::DuoMover::high: return "upper voice";
        case pitch::DuoMover::none: break;
    }
    return "";
}

std::string_view interval_word(double dev_cents, double in_tune_cents) {
    return std::fabs(dev_cents) <= in_tune_cents ? "in tune" : dev_cents > 0 ? "wide" : "narrow";
}

std::string move_words(const pitch::DuoAdvice& a) {
    if (!a.judged) return "";
    if (a.mover == pitch::DuoMover::none) return "in tune";
    char buf[64];
    const double c = std::fabs(a.move_cents);
    std::snprintf(buf, sizeof buf, "move the %s %s %.*f c", std::string(mover_words(a.mover)).c_str(),
                  a.move_cents > 0 ? "up" : "down", c < 9.95 ? 1 : 0, c);
    return buf;
}

}  // namespace beatless::ui
