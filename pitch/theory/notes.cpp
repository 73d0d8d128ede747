#include "pitch/theory/notes.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <array>
#include <cctype>
#include <charconv>
#include <cmath>

namespace beatless::pitch {

double midi_to_hz(double midi, double a4_hz) { return a4_hz * std::exp2((midi - 69.0) / 12.0); }

double hz_to_midi(double freq_hz, double a4_hz) { return 69.0 + 12.0 * std::log2(freq_hz / a4_hz); }

int note_to_midi(std::string_view name) {
    const std::string_view t = trim(name);
    const auto bad = [&]() -> int {
        throw Error(quote(name) + ": not a note name (expected a form such as C4, F#3 or Bb2)");
    };
    if (t.empty()) return bad();
    static constexpr std::array<int, 7> letter_pc = {9, 11, 0, 2, 4, 5, 7};  // A B C D E F G
    const char L = static_cast<char>(std::toupper(static_cast<unsigned char>(t[0])));
    if (L < 'A' || L > 'G') return bad();
    int pc = letter_pc[static_cast<std::size_t>(L - 'A')];
    std::size_t i = 1;
    while (i < t.size()) {
        if (t[i] == '#') {
            ++pc;
            ++i;
        } else if (t[i] == 'b') {
            --pc;
            ++i;
        } else if (t.substr(i, 3) == "\xE2\x99\xAF") {  // U+266F sharp sign
            ++pc;
            i += 3;
        } else if (t.substr(i, 3) == "\xE2\x99\xAD") {  // U+266D flat sign
            --pc;
            i += 3;
        } else {
            break;
        }
    }
    const std::string_view oct = t.substr(i);
    int octave = 0;
    auto [end, ec] = std::from_chars(oct.data(), oct.data() + oct.size(), octave);
    if (oct.empty() || ec != std::errc() || end != oct.data() + oct.size()) return bad();
    if (octave < -1 || octave > 10) throw Error(quote(name) + ": octave out of range (-1 to 10)");
    return 12 * (octave + 1) + pc;
}

double note_to_hz(std::string_view name, double a4_hz) { return midi_to_hz(note_to_midi(name), a4_hz); }

std::string midi_to_name(int midi) { return midi_to_name(midi, BlackKeys::sharps); }

std::string midi_to_name(int midi, BlackKeys spelled) {
    static constexpr std::array<const char*, 12> sharps = {"C",  "C#", "D",  "D#", "E",  "F",
                                                           "F#", "G",  "G#", "A",  "A#", "B"};
    static constexpr std::array<const char*, 12> flats = {"C",  "Db", "D",  "Eb", "E",  "F",
                                                          "Gb", "G",  "Ab", "A",  "Bb", "B"};
    const int pc = ((midi % 12) + 12) % 12;
    const int octave = (midi - pc) / 12 - 1;
    const auto& names = spelled == BlackKeys::flats ? flats : sharps;
    return std::string(names[static_cast<std::size_t>(pc)]) + std::to_string(octave);
}

bool has_flat(std::string_view name) {
    const std::string_view t = trim(name);
    return t.size() > 1 &&
           (t.substr(1).find('b') != std::string_view::npos || t.find("\xE2\x99\xAD") != std::string_view::npos);
}

NearestNote hz_to_note(double freq_hz, double a4_hz) {
    NearestNote n;
    const double m = hz_to_midi(freq_hz, a4_hz);
    n.midi = static_cast<int>(std::lround(m));
    n.offset_cents = 100.0 * (m - n.midi);
    n.name = midi_to_name(n.midi);
    return n;
}

double parse_frequency(std::string_view text, double a4_hz) {
    std::string_view t = trim(text);
    if (t.empty()) throw Error("'': empty frequency (expected a note such as A2 or a number of Hz such as 110)");
    if (std::isdigit(static_cast<unsigned char>(t[0])) || t[0] == '.' || t[0] == '-') {
        std::string_view num = t;
        if (num.size() >= 2) {
            const std::string_view tail = num.substr(num.size() - 2);
            if (tail == "hz" || tail == "Hz" || tail == "HZ") num = trim(num.substr(0, num.size() - 2));
        }
        double v = 0.0;
        auto [end, ec] = std::from_chars(num.data(), num.data() + num.size(), v, std::chars_format::fixed);
        if (ec != std::errc() || end != num.data() + num.size())
            throw Error(quote(text) + ": not a frequency (expected a note such as A2 or a number of Hz such as 110)");
        if (!(v >= 1.0 && v <= 20000.0)) throw Error(quote(text) + ": frequency out of range (1 Hz to 20 kHz)");
        return v;
    }
    const double hz = note_to_hz(t, a4_hz);
    if (!(hz >= 1.0 && hz <= 20000.0)) throw Error(quote(text) + ": frequency out of range (1 Hz to 20 kHz)");
    return hz;
}

double parse_root(std::string_view text, double a4_hz) {
    const double hz = parse_frequency(text, a4_hz);
    if (!(hz >= kRootMinHz && hz <= kRootMaxHz))
        throw Error(quote(text) + " = " + format_trimmed(hz, 3) + " Hz: out of range for a root (" +
                    format_trimmed(kRootMinHz, 0) + " to " + format_trimmed(kRootMaxHz, 0) + " Hz)");
    return hz;
}

double check_a4(double a4_hz) {
    if (!(a4_hz >= 400.0 && a4_hz <= 480.0))
        throw Error("A4 reference " + format_trimmed(a4_hz, 3) + " Hz: out of range (400 to 480 Hz)");
    return a4_hz;
}

}  // namespace beatless::pitch
