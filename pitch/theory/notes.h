// Notes — scientific pitch notation and frequencies for any A4 reference.
// Method: scientific pitch notation (Acoustical Society of America, 1939: C4 is middle C, octave numbers change at C)
// and 12-tone equal temperament, f = a4_hz * 2^((midi - 69) / 12), MIDI 69 = A4 (440 Hz by ISO 16:1975).
// Thread: any; pure functions. Allocates: the strings it returns.
#pragma once

#include <string>
#include <string_view>

namespace beatless::pitch {

constexpr double kDefaultA4Hz = 440.0;  // ISO 16:1975

double midi_to_hz(double midi, double a4_hz = kDefaultA4Hz);
double hz_to_midi(double freq_hz, double a4_hz = kDefaultA4Hz);

// "C4" -> MIDI 60; throws Error naming the text when it is not a note. A name is a letter A-G, any number
// of '#' or 'b' (also the Unicode sharp and flat signs), and an octave from -1 to 10: "C4", "F#3", "Bb2", "C##5".
int note_to_midi(std::string_view name);
double note_to_hz(std::string_view name, double a4_hz = kDefaultA4Hz);

struct NearestNote {
    std::string name;         // "A4", "F#3" (sharps for black keys)
    int midi = 0;             // MIDI number of that note
    double offset_cents = 0;  // freq_hz above (+) or below (-) the note
};
NearestNote hz_to_note(double freq_hz, double a4_hz = kDefaultA4Hz);
std::string midi_to_name(int midi);  // 60 -> "C4"
enum class BlackKeys { sharps, flats };
std::string midi_to_name(int midi, BlackKeys spelled);  // 70 -> "A#4" or "Bb4"
// True when a note name carries a flat ("Bb3", "E♭"): spell neighbours with flats too.
bool has_flat(std::string_view name);

// A root or frequency given as a note name ("A2") or a number of Hz
// ("110", "110hz", "110 Hz"). Throws Error naming the text when it is
// neither, or when the frequency is not in 1 Hz .. 20 kHz.
double parse_frequency(std::string_view text, double a4_hz = kDefaultA4Hz);

// A drone root: parse_frequency, limited to kRootMinHz .. kRootMaxHz, the
// range a drone can sound on ordinary loudspeakers and whose intervals
// (up to two octaves above) the tracker follows. Throws Error naming the
// text and the range: "'C#-1' = 8.662 Hz: out of range for a root (20 to 2000 Hz)".
inline constexpr double kRootMinHz = 20.0;
inline constexpr double kRootMaxHz = 2000.0;
double parse_root(std::string_view text, double a4_hz = kDefaultA4Hz);

// Checks an A4 reference given by the user: 400-480 Hz (throws Error otherwise).
double check_a4(double a4_hz);

}  // namespace beatless::pitch
