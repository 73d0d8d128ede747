#include "pitch/theory/spelling.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/notes.h"

#include <array>
#include <cctype>
#include <cmath>

namespace beatless::pitch {

namespace {

constexpr std::array<int, 7> kNaturalPc = {0, 2, 4, 5, 7, 9, 11};  // C D E F G A B
constexpr std::array<char, 7> kLetters = {'C', 'D', 'E', 'F', 'G', 'A', 'B'};
// Letter steps above the tonic for each semitone 0..11: 1 b2 2 b3 3 4 #4 5 b6 6 b7 7.
constexpr std::array<int, 12> kDegreeStep = {0, 1, 1, 2, 2, 3, 3, 4, 5, 5, 6, 6};

int mod(int a, int m) { return ((a % m) + m) % m; }

struct Spelled {
    int letter = 0;
    int alter = 0;
};

// step_change: letters added to the usual degree (+1 turns #4 into b5, -1 b6 into #5).
Spelled spell(const Tonic& tonic, int semitones, int step_change = 0) {
    const int s = mod(semitones, 12);
    Spelled out;
    out.letter = mod(tonic.letter + kDegreeStep[static_cast<std::size_t>(s)] + step_change, 7);
    const int target_pc = mod(tonic.pc + s, 12);
    int alter = target_pc - kNaturalPc[static_cast<std::size_t>(out.letter)];
    if (alter > 6) alter -= 12;
    if (alter < -6) alter += 12;
    out.alter = alter;
    return out;
}

std::string letter_name(int letter, int alter) {
    std::string n(1, kLetters[static_cast<std::size_t>(letter)]);
    for (int i = 0; i < alter; ++i) n += '#';
    for (int i = 0; i > alter; --i) n += 'b';
    return n;
}

std::string with_octave(const Spelled& s, int midi) {
    // The octave number belongs to the letter: Cb4 is MIDI 59, B#3 is MIDI 60.
    const int base = kNaturalPc[static_cast<std::size_t>(s.letter)] + s.alter;
    const int octave = (midi - base - mod(midi - base, 12)) / 12 - 1;
    return letter_name(s.letter, s.alter) + std::to_string(octave);
}

}  // namespace

std::string Tonic::name() const { return letter_name(letter, alter); }

Tonic parse_tonic(std::string_view note) {
    const std::string_view t = trim(note);
    const auto bad = [&]() -> Tonic {
        throw Error(quote(note) + ": not a note name (expected a form such as C, Eb, F#3 or Bb2)");
    };
    if (t.empty()) return bad();
    const char L = static_cast<char>(std::toupper(static_cast<unsigned char>(t[0])));
    if (L < 'A' || L > 'G') return bad();
    Tonic k;
    k.letter = mod(L - 'C', 7);
    std::size_t i = 1;
    while (i < t.size()) {
        if (t[i] == '#') {
            ++k.alter;
            ++i;
        } else if (t[i] == 'b') {
            --k.alter;
            ++i;
        } else if (t.substr(i, 3) == "\xE2\x99\xAF") {  // U+266F sharp sign
            ++k.alter;
            i += 3;
        } else if (t.substr(i, 3) == "\xE2\x99\xAD") {  // U+266D flat sign
            --k.alter;
            i += 3;
        } else {
            break;
        }
    }
    if (i < t.size()) (void)note_to_midi(t);  // validates the octave; throws naming the text
    k.pc = mod(kNaturalPc[static_cast<std::size_t>(k.letter)] + k.alter, 12);
    return k;
}

std::string spell_pitch_class(const Tonic& tonic, int semitones) {
    const Spelled s = spell(tonic, semitones);
    return letter_name(s.letter, s.alter);
}

std::string spell_midi(const Tonic& tonic, int midi) { return with_octave(spell(tonic, midi - tonic.pc), midi); }

std::vector<std::string> spell_chord(const Tonic& root, const std::vector<int>& midi) {
    bool has[12] = {};
    for (const int m : midi) has[mod(m - root.pc, 12)] = true;
    std::vector<std::string> out;
    for (const int m : midi) {
        const int s = mod(m - root.pc, 12);
        int change = 0;
        if (s == 6 && has[3]) change = 1;              // diminished fifth
        if (s == 8 && has[4] && !has[7]) change = -1;  // augmented fifth
        out.push_back(with_octave(spell(root, m - root.pc, change), m));
    }
    return out;
}

NoteAboveRoot spell_above_root(std::string_view root, double cents_above_root, double a4_hz) {
    const std::string_view t = trim(root);
    int root_midi = 0;
    Tonic tonic;
    if (!t.empty() && std::isalpha(static_cast<unsigned char>(t[0]))) {
        tonic = parse_tonic(t);
        root_midi = note_to_midi(t.find_first_of("-0123456789") == std::string_view::npos ? std::string(t) + "4"
                                                                                          : std::string(t));
    } else {
        root_midi = hz_to_note(parse_frequency(t, a4_hz), a4_hz).midi;
        tonic = parse_tonic(midi_to_name(root_midi));
    }
    NoteAboveRoot out;
    if (!std::isfinite(cents_above_root)) throw Error("spell_above_root: the interval is not a finite number of cents");
    const int semis = static_cast<int>(std::lround(cents_above_root / 100.0));
    // Tritone family: wider than 600 cents (by more than rounding) reads as a diminished fifth.
    const int change =
        (mod(semis, 12) == 6 && cents_above_root - 1200.0 * std::floor(cents_above_root / 1200.0) > 600.0 + 1e-6) ? 1
                                                                                                                  : 0;
    const Spelled s = spell(tonic, semis, change);
    out.midi = root_midi + semis;
    out.name = with_octave(s, out.midi);
    out.pitch_class = letter_name(s.letter, s.alter);
    out.offset_cents = cents_above_root - 100.0 * semis;
    return out;
}

NoteAboveRoot spell_hz_above_root(std::string_view root, double freq_hz, double a4_hz) {
    const double root_hz = parse_frequency(root, a4_hz);
    NoteAboveRoot n = spell_above_root(root, 1200.0 * std::log2(freq_hz / root_hz), a4_hz);
    n.offset_cents = 1200.0 * std::log2(freq_hz / midi_to_hz(n.midi, a4_hz));
    return n;
}

}  // namespace beatless::pitch
