// Small text helpers shared by the commands and the screens (commands.h).
#include "ui/commands.h"

#include "pitch/beats.h"
#include "pitch/error.h"
#include "pitch/notes.h"
#include "pitch/text.h"
#include "ui/settings.h"

#include <cctype>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>

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

std::string join_args(const std::vector<std::string>& args) {
    std::string s;
    for (const auto& a : args) {
        if (!s.empty()) s += ' ';
        s += a;
    }
    return s;
}

double parse_lowest(const std::string& text, double a4_hz) {
    const double hz = pitch::parse_frequency(text, a4_hz);
    if (!(hz >= kLowestMinHz && hz <= kLowestMaxHz))
        throw Error("--lowest " + text + " = " + pitch::format_trimmed(hz, 1) + " Hz: out of range (" + pitch::format_trimmed(kLowestMinHz, 0) +
                    " to " + pitch::format_trimmed(kLowestMaxHz, 0) + " Hz)");
    return hz;
}

std::string root_echo(std::string_view typed, double root_hz) {
    const std::string_view t = pitch::trim(typed);
    const std::string hz = pitch::format_trimmed(root_hz, 3) + " Hz";
    if (t.empty() || !std::isalpha(static_cast<unsigned char>(t[0]))) return hz;
    return std::string(t) + " = " + hz;
}

namespace {

std::string config_home() {
    if (const char* b = std::getenv("BEATLESS_HOME"); b && *b) return std::string(b) + "/config";
    if (const char* x = std::getenv("XDG_CONFIG_HOME"); x && *x) return std::string(x) + "/beatless";
    if (const char* h = std::getenv("HOME"); h && *h) return std::string(h) + "/.config/beatless";
    return {};
}

}  // namespace

// The hearing caution, once per user (a marker file in the config directory).
void hearing_caution_once() {
    const std::string dir = config_home();
    const std::string marker = dir.empty() ? std::string() : dir + "/drone-caution-shown";
    std::error_code ec;
    if (!marker.empty() && std::filesystem::exists(marker, ec)) return;
    std::fprintf(stderr, "beatless: caution: the drone is a sustained tone; keep the level low, especially on headphones, and take breaks\n");
    if (marker.empty()) return;
    std::filesystem::create_directories(dir, ec);
    std::ofstream(marker) << "shown\n";
}

}  // namespace beatless::ui
